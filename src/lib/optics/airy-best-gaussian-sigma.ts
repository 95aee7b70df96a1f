import { airyIntensity } from "./resolution-limits";

/**
 * σ of the best least-squares Gaussian exp(−r²/2σ²) (peak fixed at 1) to the 2D Airy pattern,
 * in units of λ/NA.
 *
 * Notes: minimises ∫₀^∞ ([2J₁(v)/v]² − exp(−v²/2s²))² v dv over s (v = 2π r NA/λ) by
 * golden-section search, with the integral by the trapezoid rule on 0 ≤ v ≤ 80 (step 0.005);
 * σ = s/(2π). Evaluates to 0.2103 λ/NA (FWHM 0.495 λ/NA, 4 % below the Airy FWHM), compared
 * with the curvature-matched √2/(kNA) = 0.2251 λ/NA.
 *
 * References: METHODS.md §2.3 and check #15 (computed there; the 0.21 attribution to Zhang et
 * al. 2007 is from memory).
 *
 * @returns σ in units of λ/NA
 * @example airyBestGaussianSigma() // 0.2103
 */
export function airyBestGaussianSigma(): number {
  const step = 0.005;
  const count = Math.round(80 / step);
  const airy = new Float64Array(count + 1);
  for (let i = 0; i <= count; i++) airy[i] = airyIntensity(i * step);
  const cost = (s: number): number => {
    let sum = 0;
    for (let i = 0; i <= count; i++) {
      const v = i * step;
      const diff = airy[i] - Math.exp((-v * v) / (2 * s * s));
      sum += (i === 0 || i === count ? 0.5 : 1) * diff * diff * v;
    }
    return sum;
  };
  const golden = (Math.sqrt(5) - 1) / 2;
  let a = 0.8;
  let b = 2;
  let c = b - golden * (b - a);
  let d = a + golden * (b - a);
  let fc = cost(c);
  let fd = cost(d);
  for (let i = 0; i < 60 && b - a > 1e-9; i++) {
    if (fc < fd) {
      b = d;
      d = c;
      fd = fc;
      c = b - golden * (b - a);
      fc = cost(c);
    } else {
      a = c;
      c = d;
      fc = fd;
      d = a + golden * (b - a);
      fd = cost(d);
    }
  }
  return (a + b) / 2 / (2 * Math.PI);
}
