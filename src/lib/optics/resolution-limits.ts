import { besselJ1 } from "./bessel-j1";
import { checkPositive } from "./check-optics-inputs";

/** Two-point resolution distances for incoherent imaging (all in nm). */
export interface ResolutionLimits {
  /** Rayleigh criterion with the textbook constant, 0.61 λ/NA, nm. */
  rayleighNm: number;
  /** Exact radius of the first dark Airy ring, j₁,₁/(2π)·λ/NA = 0.60983 λ/NA, nm. */
  airyFirstZeroNm: number;
  /** Abbe limit λ/(2NA) (incoherent OTF cutoff period), nm. */
  abbeNm: number;
  /** Sparrow limit (no dip between two equal points), 0.4736 λ/NA, nm. */
  sparrowNm: number;
}

/** First zero of J₁ (j₁,₁). */
export const BESSEL_J1_FIRST_ZERO = 3.8317059702075125;

/**
 * Airy intensity [2J₁(v)/v]² at the optical coordinate v = 2π r NA/λ (1 at v = 0).
 *
 * References: Born & Wolf, Principles of Optics, §8.5.2 (Airy pattern; section number from memory).
 *
 * @param v - optical radial coordinate (dimensionless)
 * @returns normalised intensity
 */
export function airyIntensity(v: number): number {
  if (Math.abs(v) < 1e-8) return 1;
  const a = (2 * besselJ1(v)) / v;
  return a * a;
}

/**
 * Sparrow constant: separation (in units of λ/NA) at which the summed intensity of two equal
 * incoherent Airy patterns has zero curvature at the midpoint. The midpoint curvature is
 * 2·A″(d/2), so the constant is twice the inflection point of the Airy profile, found here by
 * bisection on a central second difference. Evaluates to 0.47358 (METHODS §1 check #4).
 */
function sparrowConstant(): number {
  const h = 1e-4;
  const curvature = (v: number) => airyIntensity(v + h) - 2 * airyIntensity(v) + airyIntensity(v - h);
  let lo = 0.5;
  let hi = 2.5; // A″ < 0 near the centre, > 0 before the first zero
  for (let i = 0; i < 80; i++) {
    const mid = (lo + hi) / 2;
    if (curvature(mid) < 0) lo = mid;
    else hi = mid;
  }
  const vInflection = (lo + hi) / 2;
  return (2 * vInflection) / (2 * Math.PI);
}

const SPARROW_CONSTANT = sparrowConstant();

/**
 * Rayleigh, exact Airy-zero, Abbe and Sparrow two-point resolution distances.
 *
 * Notes: incoherent imaging, circular aberration-free pupil, lateral. The criteria are
 * conventions for two equally bright points; they do not apply unchanged to confocal,
 * two-photon or aberrated PSFs (report FWHM instead).
 *
 * References: Born & Wolf, Principles of Optics (7th ed. 1999) §8.5.2, §8.6.2 (from memory for
 * section numbers); Abbe 1873 (via Passon & Grebe-Ellis, JOSA A 33(7):B31, 2016); METHODS.md §1.
 *
 * @param options.wavelengthNm - vacuum wavelength, nm
 * @param options.na - numerical aperture
 * @returns distances in nm
 * @throws RangeError for non-positive inputs
 * @example resolutionLimits({ wavelengthNm: 500, na: 1.4 }).rayleighNm // 217.86
 */
export function resolutionLimits(options: { wavelengthNm: number; na: number }): ResolutionLimits {
  const { wavelengthNm, na } = options;
  checkPositive("wavelengthNm", wavelengthNm);
  checkPositive("na", na);
  const unit = wavelengthNm / na;
  return {
    rayleighNm: 0.61 * unit,
    airyFirstZeroNm: (BESSEL_J1_FIRST_ZERO / (2 * Math.PI)) * unit,
    abbeNm: unit / 2,
    sparrowNm: SPARROW_CONSTANT * unit,
  };
}

/**
 * Intensity at the midpoint between two equal incoherent Airy patterns, relative to the
 * intensity at either source position.
 *
 * References: METHODS.md §1 (73.5 % at the Rayleigh separation; computed there).
 *
 * @param options.separationNm - distance between the two points, nm
 * @param options.wavelengthNm - vacuum wavelength, nm
 * @param options.na - numerical aperture
 * @returns midpoint / peak ratio (dimensionless)
 * @example twoPointMidpointRatio({ separationNm: 217.8, wavelengthNm: 500, na: 1.4 }) // 0.735
 */
export function twoPointMidpointRatio(options: {
  separationNm: number;
  wavelengthNm: number;
  na: number;
}): number {
  const { separationNm, wavelengthNm, na } = options;
  checkPositive("wavelengthNm", wavelengthNm);
  checkPositive("na", na);
  if (!Number.isFinite(separationNm) || separationNm < 0) {
    throw new RangeError(`separationNm must be finite and ≥ 0, got ${separationNm}`);
  }
  const v = (2 * Math.PI * na * separationNm) / wavelengthNm;
  return (2 * airyIntensity(v / 2)) / (1 + airyIntensity(v));
}
