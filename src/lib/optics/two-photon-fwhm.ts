import { axialApertureTerm, checkApertureAndIndex, checkPositive } from "./check-optics-inputs";
import type { FwhmNm } from "./widefield-fwhm";

/** FWHM per 1/e radius ω of the Zipfel I² Gaussian exp(−r²/ω²)... conversion factor 2√(ln 2) = 1.6651 (METHODS §2.4). */
export const ZIPFEL_FWHM_PER_OMEGA = 2 * Math.sqrt(Math.LN2);

/**
 * Two-photon excitation FWHM from the Zipfel, Williams & Webb (2003) fits.
 *
 * Notes: ω_xy = 0.320 λ/(√2 NA) for NA ≤ 0.7, 0.325 λ/(√2 NA^0.91) for NA > 0.7;
 * ω_z = 0.532 λ/√2 · 1/(n − √(n² − NA²)); FWHM = 2√(ln 2)·ω (checked in METHODS against the
 * squared scalar Debye PSF, within 2–8 %). λ = excitation wavelength; n = immersion/sample RI.
 *
 * References: Zipfel WR, Williams RM, Webb WW, Nat Biotechnol 21:1369–1377 (2003), Fig. 4
 * (constants confirmed in code; journal details from memory); METHODS.md §2.4.
 *
 * @param options.na - numerical aperture
 * @param options.immersionRi - RI n (water in the original fits)
 * @param options.excitationWavelengthNm - vacuum excitation wavelength, nm
 * @returns lateral and axial FWHM, nm
 * @throws RangeError for invalid inputs
 * @example twoPhotonFwhm({ na: 1.0, immersionRi: 1.33, excitationWavelengthNm: 920 }) // { lateralNm: 352.0, axialNm: 1271.8 }
 */
export function twoPhotonFwhm(options: {
  na: number;
  immersionRi: number;
  excitationWavelengthNm: number;
}): FwhmNm {
  const { na, immersionRi, excitationWavelengthNm: lambda } = options;
  checkApertureAndIndex(na, immersionRi);
  checkPositive("excitationWavelengthNm", lambda);
  const omegaXy =
    na <= 0.7 ? (0.32 * lambda) / (Math.SQRT2 * na) : (0.325 * lambda) / (Math.SQRT2 * na ** 0.91);
  const omegaZ = (0.532 * lambda) / Math.SQRT2 / axialApertureTerm(na, immersionRi);
  return { lateralNm: ZIPFEL_FWHM_PER_OMEGA * omegaXy, axialNm: ZIPFEL_FWHM_PER_OMEGA * omegaZ };
}
