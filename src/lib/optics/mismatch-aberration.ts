import { checkPositive } from "./check-optics-inputs";
import { pupilAxialMoments } from "./pupil-axial-moments";

/** Strehl estimates from an RMS wavefront error. */
export interface MarechalStrehl {
  /** Mahajan's form exp(−(2πσ_W/λ)²). */
  exponential: number;
  /** Maréchal's form 1 − (2πσ_W/λ)² (clamped at 0). */
  quadratic: number;
}

/**
 * Strehl ratio from an RMS wavefront error (Maréchal / Mahajan approximations).
 *
 * Notes: accurate to about 0.1 % for σ_W ≤ λ/14 (S ≈ 0.8, "diffraction-limited"); for larger
 * errors both are pessimistic compared with the full model (METHODS §5).
 *
 * References: Born & Wolf §9.1 eq. (24); Mahajan, JOSA 72(9):1258–1266 (1982); Ross, Appl Opt
 * 48(10) (2009); METHODS.md check #30 (σ_W = λ/14 → 0.8176 / 0.7986).
 *
 * @param rmsWavefrontNm - RMS wavefront error σ_W, nm (≥ 0)
 * @param wavelengthNm - vacuum wavelength, nm
 * @returns both Strehl estimates (dimensionless)
 * @example marechalStrehl(520 / 14, 520) // { exponential: 0.8176, quadratic: 0.7986 }
 */
export function marechalStrehl(rmsWavefrontNm: number, wavelengthNm: number): MarechalStrehl {
  if (!Number.isFinite(rmsWavefrontNm) || rmsWavefrontNm < 0) {
    throw new RangeError(`rmsWavefrontNm must be finite and ≥ 0, got ${rmsWavefrontNm}`);
  }
  checkPositive("wavelengthNm", wavelengthNm);
  const x = ((2 * Math.PI * rmsWavefrontNm) / wavelengthNm) ** 2;
  return { exponential: Math.exp(-x), quadratic: Math.max(0, 1 - x) };
}

/** Result of {@link mismatchRmsWavefront}. */
export interface MismatchRmsWavefront {
  /** Residual RMS wavefront per µm of depth after piston and best-defocus removal, nm/µm. */
  rmsNmPerUm: number;
  /** Depth at which the residual reaches λ/14 (Strehl ≈ 0.8), µm. */
  marechalDepthUm: number;
}

const NODES = 512;

/**
 * Residual RMS wavefront of an RI mismatch per µm of depth, and the Maréchal depth.
 *
 * Notes: W(ρ) = d·√(n_s² − s²) − δ·√(n_i² − s²), s = NA·ρ; removing piston and the best
 * (RMS-optimal) defocus δ leaves σ_W = d·√(var(b) − cov(a, b)²/var(a)) with a = √(n_i² − s²),
 * b = √(n_s² − s²), averaged over the pupil area (ρ ≤ ρ_max = min(1, n_s/NA, n_i/NA)). The
 * residual grows linearly with depth; d₀.₈ = (λ/14)/slope. The full GL model gives slightly
 * larger S = 0.8 depths (1.91 vs 1.76 µm for oil NA 1.3 → water).
 *
 * References: METHODS.md §5 (computed there: oil NA 1.3 → water 21.05 nm/µm, 1.76 µm at 520 nm);
 * Booth, Neil & Wilson, J Microsc 192:90 (1998) (from memory).
 *
 * @param options.na - numerical aperture
 * @param options.immersionRi - immersion RI n_i
 * @param options.sampleRi - sample RI n_s
 * @param options.wavelengthNm - vacuum wavelength, nm (for the Maréchal depth)
 * @returns slope (nm/µm) and Maréchal depth (µm; Infinity when matched)
 * @example mismatchRmsWavefront({ na: 1.3, immersionRi: 1.518, sampleRi: 1.333, wavelengthNm: 520 })
 */
export function mismatchRmsWavefront(options: {
  na: number;
  immersionRi: number;
  sampleRi: number;
  wavelengthNm: number;
}): MismatchRmsWavefront {
  const { na, immersionRi, sampleRi, wavelengthNm } = options;
  checkPositive("na", na);
  checkPositive("immersionRi", immersionRi);
  checkPositive("sampleRi", sampleRi);
  checkPositive("wavelengthNm", wavelengthNm);
  const { varA, varB, covAB: cov } = pupilAxialMoments(na, immersionRi, sampleRi, NODES);
  const residual = Math.max(0, varB - (cov * cov) / varA);
  const rmsNmPerUm = Math.sqrt(residual) * 1000;
  return {
    rmsNmPerUm,
    marechalDepthUm: rmsNmPerUm > 0 ? wavelengthNm / 14 / rmsNmPerUm : Number.POSITIVE_INFINITY,
  };
}
