import { axialApertureTerm, checkApertureAndIndex, checkPositive } from "./check-optics-inputs";
import type { Modality } from "./theoretical-fwhm";

/** Nyquist intervals, nm. */
export interface NyquistSampling {
  /** Largest lateral pixel that samples the OTF support, nm. */
  lateralNm: number;
  /** Largest z-step, nm. */
  axialNm: number;
  /** Which formula branch was used. */
  formulaId: string;
}

/**
 * Nyquist pixel size and z-step from the OTF support, per modality.
 *
 * Notes (α = asin(NA/n), n(1 − cos α) = n − √(n² − NA²)):
 * - widefield and light-sheet (detection side): Δxy = λ_em/(4 NA), Δz = λ_em/(2 n(1 − cos α));
 * - confocal and spinning disk (ideal small pinhole, λ_ex): Δxy = λ_ex/(8 NA), Δz = λ_ex/(4 n(1 − cos α));
 *   this is the strict (conservative) limit for open pinholes too;
 * - two-photon: widefield formula with λ = λ_ex/2.
 *
 * References: Heintzmann & Sheppard, Micron 38:145–149 (2007), doi:10.1016/j.micron.2006.07.017
 * (formula; title from memory); METHODS.md §6.
 *
 * @param options.modality - imaging modality
 * @param options.na - numerical aperture
 * @param options.immersionRi - immersion RI n
 * @param options.emissionWavelengthNm - vacuum emission wavelength, nm
 * @param options.excitationWavelengthNm - vacuum excitation wavelength, nm (confocal/2P; falls back to emission)
 * @returns Nyquist intervals in nm
 * @throws RangeError for invalid inputs
 * @example nyquistSampling({ modality: "confocal", na: 1.3, immersionRi: 1.515, emissionWavelengthNm: 520, excitationWavelengthNm: 488 }) // 46.9 / 165.5 nm
 */
export function nyquistSampling(options: {
  modality: Modality;
  na: number;
  immersionRi: number;
  emissionWavelengthNm: number;
  excitationWavelengthNm?: number;
}): NyquistSampling {
  const {
    modality,
    na,
    immersionRi,
    emissionWavelengthNm,
    excitationWavelengthNm = emissionWavelengthNm,
  } = options;
  checkApertureAndIndex(na, immersionRi);
  checkPositive("emissionWavelengthNm", emissionWavelengthNm);
  checkPositive("excitationWavelengthNm", excitationWavelengthNm);
  const axialTerm = axialApertureTerm(na, immersionRi);
  switch (modality) {
    case "widefield":
    case "light-sheet":
      return {
        lateralNm: emissionWavelengthNm / (4 * na),
        axialNm: emissionWavelengthNm / (2 * axialTerm),
        formulaId: "nyquist-widefield",
      };
    case "confocal":
    case "spinning-disk":
      return {
        lateralNm: excitationWavelengthNm / (8 * na),
        axialNm: excitationWavelengthNm / (4 * axialTerm),
        formulaId: "nyquist-confocal",
      };
    case "two-photon":
      return {
        lateralNm: excitationWavelengthNm / 2 / (4 * na),
        axialNm: excitationWavelengthNm / 2 / (2 * axialTerm),
        formulaId: "nyquist-two-photon",
      };
    default: {
      const never: never = modality;
      throw new RangeError(`nyquistSampling: unknown modality ${String(never)}`);
    }
  }
}
