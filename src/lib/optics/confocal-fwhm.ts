import { axialApertureTerm, checkApertureAndIndex, checkPositive } from "./check-optics-inputs";
import { AIRY_FWHM_CONSTANT, WIDEFIELD_AXIAL_CONSTANT, type FwhmNm } from "./widefield-fwhm";

/** Airy² FWHM constant (ideal confocal, point pinhole): 0.3693 λ/NA (METHODS §2.1). */
export const CONFOCAL_LATERAL_CONSTANT = 0.3693;
/** sinc⁴ axial constant (ideal confocal, point pinhole): 0.6378 λ/(n − √(n² − NA²)). */
export const CONFOCAL_AXIAL_CONSTANT = 0.6378;
/** Pinhole (AU) at and below which the point-pinhole limit is used. */
export const SMALL_PINHOLE_AU = 0.25;
/** Pinhole (AU) at and above which the large-pinhole limit is used. */
export const LARGE_PINHOLE_AU = 1;

/** Result of {@link confocalFwhm}. */
export interface ConfocalFwhm extends FwhmNm {
  /** Weight of the large-pinhole limit (0 = point pinhole, 1 = ≥ 1 AU). */
  largePinholeWeight: number;
  /** Effective wavelength λ̄ = √2 λ_ex λ_em / √(λ_ex² + λ_em²), nm. */
  effectiveWavelengthNm: number;
}

/**
 * Theoretical point-scanning confocal FWHM as a function of the pinhole diameter in Airy units.
 *
 * Notes:
 * - pinhole ≤ 0.25 AU: 0.3693 λ̄/NA lateral, 0.6378 λ̄/(n − √(n² − NA²)) axial, with
 *   λ̄ = √2 λ_ex λ_em/√(λ_ex² + λ_em²) (Gaussian product of excitation and emission PSFs);
 * - pinhole ≥ 1 AU: 0.5145 λ_ex/NA and 0.8859 λ_ex/(n − √(n² − NA²)) (excitation-limited);
 * - in between (product convention, not a published formula): each width is blended as
 *   (1 − w)·small + w·large with w = smoothstep((p − 0.25)/0.75) = t²(3 − 2t), which is
 *   monotone and has zero slope at both limits. Wilson's analytic finite-pinhole results are
 *   not implemented; expect the blend to be within ~10 % of them.
 *
 * References: METHODS.md §2.1–2.2; Cole, Jinadasa & Brown, Nat Protoc 6:1929 (2011) (table from
 * memory); Wilson, J Microsc 244:113–121 (2011).
 *
 * @param options.na - numerical aperture
 * @param options.immersionRi - immersion RI n
 * @param options.excitationWavelengthNm - vacuum excitation wavelength, nm
 * @param options.emissionWavelengthNm - vacuum emission wavelength, nm
 * @param options.pinholeAu - pinhole diameter in Airy units (≥ 0)
 * @returns lateral and axial FWHM in nm with the blend weight
 * @throws RangeError for invalid inputs
 * @example confocalFwhm({ na: 1.4, immersionRi: 1.518, excitationWavelengthNm: 520, emissionWavelengthNm: 520, pinholeAu: 0.2 })
 */
export function confocalFwhm(options: {
  na: number;
  immersionRi: number;
  excitationWavelengthNm: number;
  emissionWavelengthNm: number;
  pinholeAu: number;
}): ConfocalFwhm {
  const { na, immersionRi, excitationWavelengthNm, emissionWavelengthNm, pinholeAu } = options;
  checkApertureAndIndex(na, immersionRi);
  checkPositive("excitationWavelengthNm", excitationWavelengthNm);
  checkPositive("emissionWavelengthNm", emissionWavelengthNm);
  if (!Number.isFinite(pinholeAu) || pinholeAu < 0) {
    throw new RangeError(`pinholeAu must be finite and ≥ 0, got ${pinholeAu}`);
  }
  const lambdaBar =
    (Math.SQRT2 * excitationWavelengthNm * emissionWavelengthNm) /
    Math.hypot(excitationWavelengthNm, emissionWavelengthNm);
  const axialTerm = axialApertureTerm(na, immersionRi);
  const small = {
    lateralNm: (CONFOCAL_LATERAL_CONSTANT * lambdaBar) / na,
    axialNm: (CONFOCAL_AXIAL_CONSTANT * lambdaBar) / axialTerm,
  };
  const large = {
    lateralNm: (AIRY_FWHM_CONSTANT * excitationWavelengthNm) / na,
    axialNm: (WIDEFIELD_AXIAL_CONSTANT * excitationWavelengthNm) / axialTerm,
  };
  const t = Math.min(1, Math.max(0, (pinholeAu - SMALL_PINHOLE_AU) / (LARGE_PINHOLE_AU - SMALL_PINHOLE_AU)));
  const w = t * t * (3 - 2 * t);
  return {
    lateralNm: (1 - w) * small.lateralNm + w * large.lateralNm,
    axialNm: (1 - w) * small.axialNm + w * large.axialNm,
    largePinholeWeight: w,
    effectiveWavelengthNm: lambdaBar,
  };
}
