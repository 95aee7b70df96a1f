import { axialApertureTerm, checkApertureAndIndex, checkPositive } from "./check-optics-inputs";

/** Exact Airy FWHM constant: [2J₁(v)/v]² = ½ at v = 1.6163 → 0.5145 λ/NA (METHODS §2.1). */
export const AIRY_FWHM_CONSTANT = 0.5145;
/** Non-paraxial on-axis axial FWHM constant, sinc² half width (METHODS §2.1). */
export const WIDEFIELD_AXIAL_CONSTANT = 0.8859;

/** Lateral and axial FWHM in nm. */
export interface FwhmNm {
  lateralNm: number;
  axialNm: number;
}

/**
 * Theoretical widefield FWHM: lateral 0.5145 λ/NA, axial 0.8859 λ/(n − √(n² − NA²)).
 *
 * Notes: scalar, aberration-free, uniform pupil; λ = emission wavelength; n = immersion RI.
 * The axial form is the exact on-axis result for a Debye focus with a uniform pupil in direction
 * space and stays valid at high NA, unlike the paraxial 1.772 nλ/NA² (45 % too large at NA 1.4).
 *
 * References: METHODS.md §2.1–2.2 (constants computed there); Cole, Jinadasa & Brown, Nat Protoc
 * 6:1929 (2011), doi:10.1038/nprot.2011.407 (form of the table, from memory).
 *
 * @param options.na - numerical aperture (use the effective NA when capped by the sample)
 * @param options.immersionRi - immersion RI n
 * @param options.wavelengthNm - vacuum emission wavelength, nm
 * @returns lateral and axial FWHM, nm
 * @throws RangeError when na > immersionRi or inputs are not positive
 * @example widefieldFwhm({ na: 1.4, immersionRi: 1.518, wavelengthNm: 520 }) // { lateralNm: 191.1, axialNm: 494.7 }
 */
export function widefieldFwhm(options: { na: number; immersionRi: number; wavelengthNm: number }): FwhmNm {
  const { na, immersionRi, wavelengthNm } = options;
  checkApertureAndIndex(na, immersionRi);
  checkPositive("wavelengthNm", wavelengthNm);
  return {
    lateralNm: (AIRY_FWHM_CONSTANT * wavelengthNm) / na,
    axialNm: (WIDEFIELD_AXIAL_CONSTANT * wavelengthNm) / axialApertureTerm(na, immersionRi),
  };
}

/**
 * Paraxial widefield axial width: FWHM 1.772 nλ/NA² and first zero 2nλ/NA² (Born & Wolf).
 * Kept for comparison only; do not use at high NA.
 *
 * References: Born & Wolf, Principles of Optics §8.8 (I(0,u) ∝ [sin(u/4)/(u/4)]², from memory,
 * verified numerically in METHODS.md §2.1).
 *
 * @returns axial FWHM and first zero, nm
 * @example paraxialAxialWidths({ na: 1.4, immersionRi: 1.518, wavelengthNm: 520 }) // { fwhmNm: 713.6, firstZeroNm: 805.5 }
 */
export function paraxialAxialWidths(options: { na: number; immersionRi: number; wavelengthNm: number }): {
  fwhmNm: number;
  firstZeroNm: number;
} {
  const { na, immersionRi, wavelengthNm } = options;
  checkApertureAndIndex(na, immersionRi);
  checkPositive("wavelengthNm", wavelengthNm);
  const unit = (immersionRi * wavelengthNm) / (na * na);
  return { fwhmNm: 1.772 * unit, firstZeroNm: 2 * unit };
}
