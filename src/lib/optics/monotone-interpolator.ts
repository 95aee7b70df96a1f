/** A monotone piecewise-cubic interpolant with linear extrapolation. */
export type Interpolator = (x: number) => number;

/**
 * Monotone cubic Hermite interpolation (Fritsch–Carlson / PCHIP slopes) through (xᵢ, yᵢ), with
 * linear extrapolation using the end slopes.
 *
 * Notes: when the data are monotone the interpolant is monotone too (no overshoot), which is
 * what a depth conversion needs. Slopes: harmonic mean of neighbouring secants when they have
 * the same sign, 0 otherwise; one-sided three-point slopes at the ends, limited.
 *
 * References: Fritsch FN, Carlson RE, SIAM J Numer Anal 17(2):238–246 (1980); Moler, Numerical
 * Computing with MATLAB (2004), §3.4 (pchip).
 *
 * @param xs - strictly increasing abscissae (length ≥ 2)
 * @param ys - ordinates, same length
 * @returns the interpolating function (copies the inputs)
 * @throws RangeError when lengths differ, fewer than 2 points, or xs not strictly increasing
 * @example createMonotoneInterpolator([0, 1, 2], [0, 1, 4])(1.5)
 */
export function createMonotoneInterpolator(xs: ArrayLike<number>, ys: ArrayLike<number>): Interpolator {
  const n = xs.length;
  if (n !== ys.length)
    throw new RangeError(`createMonotoneInterpolator: xs (${n}) and ys (${ys.length}) differ in length`);
  if (n < 2) throw new RangeError(`createMonotoneInterpolator: need at least 2 points, got ${n}`);
  const x = Float64Array.from(xs);
  const y = Float64Array.from(ys);
  const h = new Float64Array(n - 1);
  const delta = new Float64Array(n - 1);
  for (let i = 0; i < n - 1; i++) {
    h[i] = x[i + 1] - x[i];
    if (!(h[i] > 0))
      throw new RangeError(`createMonotoneInterpolator: xs must be strictly increasing (index ${i + 1})`);
    delta[i] = (y[i + 1] - y[i]) / h[i];
  }
  const d = new Float64Array(n);
  if (n === 2) {
    d[0] = delta[0];
    d[1] = delta[0];
  } else {
    for (let i = 1; i < n - 1; i++) {
      if (delta[i - 1] * delta[i] > 0) {
        const w1 = 2 * h[i] + h[i - 1];
        const w2 = h[i] + 2 * h[i - 1];
        d[i] = (w1 + w2) / (w1 / delta[i - 1] + w2 / delta[i]);
      } else d[i] = 0;
    }
    const endSlope = (h0: number, h1: number, d0: number, d1: number) => {
      let s = ((2 * h0 + h1) * d0 - h0 * d1) / (h0 + h1);
      if (Math.sign(s) !== Math.sign(d0)) s = 0;
      else if (Math.sign(d0) !== Math.sign(d1) && Math.abs(s) > Math.abs(3 * d0)) s = 3 * d0;
      return s;
    };
    d[0] = endSlope(h[0], h[1], delta[0], delta[1]);
    d[n - 1] = endSlope(h[n - 2], h[n - 3], delta[n - 2], delta[n - 3]);
  }
  return (xq: number) => {
    if (xq <= x[0]) return y[0] + d[0] * (xq - x[0]);
    if (xq >= x[n - 1]) return y[n - 1] + d[n - 1] * (xq - x[n - 1]);
    let lo = 0;
    let hi = n - 1;
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if (x[mid] <= xq) lo = mid;
      else hi = mid;
    }
    const t = (xq - x[lo]) / h[lo];
    const t2 = t * t;
    const t3 = t2 * t;
    return (
      (2 * t3 - 3 * t2 + 1) * y[lo] +
      (t3 - 2 * t2 + t) * h[lo] * d[lo] +
      (-2 * t3 + 3 * t2) * y[lo + 1] +
      (t3 - t2) * h[lo] * d[lo + 1]
    );
  };
}
