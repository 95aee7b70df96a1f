/** Result of {@link axialAsymmetry}. */
export interface AxialAsymmetry {
  /** (max lobe far − max lobe near)/peak; positive = stronger lobes away from the coverslip. */
  sideLobeRatio: number | null;
  /** Strongest lobe on each side as a fraction of the peak (≥ 0). */
  farLobe: number | null;
  nearLobe: number | null;
  /** Third standardised moment of the (clipped ≥ 0) energy profile, positive toward the far side. */
  skewness: number | null;
  /** Energy on the far side of the peak / energy on the near side (peak plane split half-half). */
  energyRatio: number | null;
}

/**
 * Axial asymmetry figures of a bead from its on-axis profile and its per-plane energy.
 *
 * @param onAxis - background-subtracted on-axis intensity vs z (counts), increasing z index
 * @param energy - background-subtracted per-plane integrated intensity vs z (same planes)
 * @param peakIndex - sub-sample index of the main peak in these arrays
 * @param farIsIncreasing - true when increasing index goes away from the coverslip
 * @returns side-lobe ratio (primary), skewness and energy ratio (secondary)
 *
 * Notes: the on-axis profile is smoothed with a [1 2 1]/4 kernel; the peak is the local maximum
 * reached by climbing from `peakIndex`; on each side the central lobe ends at the first local minimum walking out from the peak, and the strongest value
 * beyond it (clipped at 0) is that side's lobe. The window given should span ±4 axial FWHM.
 * Skewness of a fixed window is fragile (its sign can flip with depth), so it is secondary.
 * References: METHODS.md §8 ("axial side-lobe ratio … primary metric"; skewness secondary).
 * @example
 * axialAsymmetry(onAxis, energy, 20, true).sideLobeRatio; // ≈ 0.3 for oil→water at 10 µm
 */
export function axialAsymmetry(
  onAxis: ArrayLike<number>,
  energy: ArrayLike<number>,
  peakIndex: number,
  farIsIncreasing: boolean,
): AxialAsymmetry {
  const n = onAxis.length;
  if (n < 3) return { sideLobeRatio: null, farLobe: null, nearLobe: null, skewness: null, energyRatio: null };
  const sm = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const a = onAxis[Math.max(0, i - 1)];
    const c = onAxis[Math.min(n - 1, i + 1)];
    sm[i] = 0.25 * a + 0.5 * onAxis[i] + 0.25 * c;
  }
  let ip = Math.min(n - 1, Math.max(0, Math.round(peakIndex)));
  // Climb to the maximum of the lobe holding peakIndex: a fitted centre can sit on the flank of a
  // skewed central lobe, and walking outward from there would count the main peak as a side lobe.
  for (;;) {
    if (ip > 0 && sm[ip - 1] > sm[ip]) ip--;
    else if (ip < n - 1 && sm[ip + 1] > sm[ip]) ip++;
    else break;
  }
  // Peak and lobes both from the smoothed profile, so the smoothing does not bias their ratio.
  const peak = sm[ip];
  let lobeUp = 0;
  let i = ip;
  while (i < n - 1 && sm[i + 1] <= sm[i]) i++;
  for (let k = i + 1; k < n; k++) lobeUp = Math.max(lobeUp, sm[k]);
  let lobeDown = 0;
  i = ip;
  while (i > 0 && sm[i - 1] <= sm[i]) i--;
  for (let k = i - 1; k >= 0; k--) lobeDown = Math.max(lobeDown, sm[k]);
  const far = (farIsIncreasing ? lobeUp : lobeDown) / peak;
  const near = (farIsIncreasing ? lobeDown : lobeUp) / peak;
  // Energy moments.
  let s0 = 0;
  let s1 = 0;
  for (let k = 0; k < n; k++) {
    const w = Math.max(0, energy[k]);
    s0 += w;
    s1 += w * k;
  }
  let skewness: number | null = null;
  let energyRatio: number | null = null;
  if (s0 > 0) {
    const mu = s1 / s0;
    let m2 = 0;
    let m3 = 0;
    for (let k = 0; k < n; k++) {
      const w = Math.max(0, energy[k]);
      const d = k - mu;
      m2 += w * d * d;
      m3 += w * d * d * d;
    }
    m2 /= s0;
    m3 /= s0;
    skewness = m2 > 0 ? (m3 / Math.pow(m2, 1.5)) * (farIsIncreasing ? 1 : -1) : 0;
    let up = 0;
    let down = 0;
    for (let k = 0; k < n; k++) {
      const w = Math.max(0, energy[k]);
      if (k > peakIndex + 0.5) up += w;
      else if (k < peakIndex - 0.5) down += w;
      else {
        // The plane holding the peak is split by where the peak sits in it.
        const f = peakIndex + 0.5 - k;
        up += w * (1 - f);
        down += w * f;
      }
    }
    const farE = farIsIncreasing ? up : down;
    const nearE = farIsIncreasing ? down : up;
    energyRatio = nearE > 0 ? farE / nearE : null;
  }
  return {
    sideLobeRatio: peak > 0 ? far - near : null,
    farLobe: peak > 0 ? far : null,
    nearLobe: peak > 0 ? near : null,
    skewness,
    energyRatio,
  };
}
