/**
 * Normalised, truncated 1D Gaussian kernel.
 *
 * @param sigma - standard deviation in samples (> 0; 0 gives the identity kernel [1])
 * @param truncate - half-width in σ @default 2.5
 * @returns weights of length 2r + 1 (r = ⌈truncate·σ⌉), summing to 1
 *
 * Notes: w_k ∝ exp(−k²/(2σ²)), k = −r…r. For white noise of σ_n, the filtered noise is
 * σ_n·√Σw_k² per axis (used to set the detection threshold on the smoothed image).
 * References: common practice.
 * @example
 * gaussianKernel(1).length; // 7
 */
export function gaussianKernel(sigma: number, truncate = 2.5): Float32Array {
  if (!(sigma >= 0) || !Number.isFinite(sigma))
    throw new RangeError(`gaussianKernel: sigma must be ≥ 0; got ${sigma}`);
  if (sigma === 0) return Float32Array.of(1);
  const r = Math.max(1, Math.ceil(truncate * sigma));
  const w = new Float32Array(2 * r + 1);
  let s = 0;
  for (let k = -r; k <= r; k++) {
    const v = Math.exp((-k * k) / (2 * sigma * sigma));
    w[k + r] = v;
    s += v;
  }
  for (let k = 0; k < w.length; k++) w[k] /= s;
  return w;
}
