import { confocalFwhm } from "./confocal-fwhm";
import { effectiveNa } from "./effective-na";
import { twoPhotonFwhm } from "./two-photon-fwhm";
import { widefieldFwhm } from "./widefield-fwhm";

/** Imaging modality (DESIGN.md §2). */
export type Modality = "widefield" | "confocal" | "spinning-disk" | "two-photon" | "light-sheet";

/** Input of {@link theoreticalFwhm}. */
export interface TheoreticalFwhmInput {
  modality: Modality;
  /** Numerical aperture of the objective. */
  na: number;
  /** Immersion RI n used in the axial formulas. */
  immersionRi: number;
  /** Vacuum emission wavelength, nm. */
  emissionWavelengthNm: number;
  /** Vacuum excitation wavelength, nm. Required for two-photon; confocal falls back to emission. */
  excitationWavelengthNm?: number;
  /** Pinhole diameter in Airy units (confocal, spinning disk). @default 1 */
  pinholeAu?: number;
  /** Sample RI: when below NA, the NA is capped at it (evanescent rays). @default no cap */
  sampleRi?: number;
  /** Light-sheet FWHM thickness, nm; combined with detection as 1/F² = 1/F_det² + 1/F_sheet². @default none (detection only) */
  lightSheetFwhmNm?: number;
}

/** Output of {@link theoreticalFwhm}: store formulaId + formulaVersion with every result. */
export interface TheoreticalFwhm {
  lateralNm: number;
  axialNm: number;
  /** Stable identifier of the formula family and branch used. */
  formulaId: string;
  /** Version of that formula's implementation; bump when constants or branches change. */
  formulaVersion: string;
  /** Plain-language notes: assumptions, caps and fall-backs applied. */
  notes: string[];
}

/** Version of the theory formulas; part of every result's provenance. */
export const THEORETICAL_FWHM_VERSION = "1.0.0";

/**
 * Theoretical (aberration-free) lateral and axial FWHM for a modality: the single entry point
 * whose formulaId/formulaVersion are stored as provenance with every measurement.
 *
 * Notes:
 * - widefield: 0.5145 λ_em/NA and 0.8859 λ_em/(n − √(n² − NA²)) (non-paraxial axial form);
 * - confocal / spinning-disk: pinhole-dependent blend between the point-pinhole limit
 *   (0.3693 λ̄/NA, 0.6378 λ̄/(n − √…)) and the ≥ 1 AU limit (0.5145 λ_ex/NA, 0.8859 λ_ex/(n − √…)),
 *   see {@link confocalFwhm}; spinning disk is treated as a confocal with pinhole crosstalk ignored;
 * - two-photon: Zipfel et al. 2003 fits with λ_ex;
 * - light-sheet: widefield detection PSF, optionally narrowed axially by a Gaussian sheet.
 * When sampleRi < NA the effective NA min(NA, n_s) is used (a note says so).
 *
 * References: METHODS.md §2; Cole, Jinadasa & Brown, Nat Protoc 6:1929 (2011); Zipfel, Williams &
 * Webb, Nat Biotechnol 21:1369 (2003); Wilson, J Microsc 244:113 (2011).
 *
 * @param input - modality, NA, RIs and wavelengths (nm)
 * @returns widths in nm with formula provenance and notes
 * @throws RangeError for invalid inputs (e.g. two-photon without excitationWavelengthNm)
 * @example theoreticalFwhm({ modality: "widefield", na: 1.4, immersionRi: 1.518, emissionWavelengthNm: 520 })
 */
export function theoreticalFwhm(input: TheoreticalFwhmInput): TheoreticalFwhm {
  const {
    modality,
    immersionRi,
    emissionWavelengthNm,
    excitationWavelengthNm,
    pinholeAu = 1,
    sampleRi,
    lightSheetFwhmNm,
  } = input;
  const notes: string[] = [];
  const { na, capped } = effectiveNa(input.na, immersionRi, sampleRi);
  if (capped)
    notes.push(
      `NA ${input.na} capped at the sample RI ${sampleRi} (rays beyond are evanescent in the sample).`,
    );
  notes.push(
    "Scalar, aberration-free, matched RI; measured values 10–30 % above theory are usual for good systems.",
  );
  switch (modality) {
    case "widefield": {
      const w = widefieldFwhm({ na, immersionRi, wavelengthNm: emissionWavelengthNm });
      return {
        ...w,
        formulaId: "widefield-airy-nonparaxial-axial",
        formulaVersion: THEORETICAL_FWHM_VERSION,
        notes,
      };
    }
    case "confocal":
    case "spinning-disk": {
      let ex = excitationWavelengthNm;
      if (ex === undefined) {
        ex = emissionWavelengthNm;
        notes.push("No excitation wavelength given: the emission wavelength was used for excitation.");
      }
      if (modality === "spinning-disk")
        notes.push("Spinning disk treated as a confocal; pinhole crosstalk is ignored.");
      const c = confocalFwhm({
        na,
        immersionRi,
        excitationWavelengthNm: ex,
        emissionWavelengthNm,
        pinholeAu,
      });
      if (c.largePinholeWeight > 0 && c.largePinholeWeight < 1) {
        notes.push(
          `Pinhole ${pinholeAu} AU lies between 0.25 and 1 AU: widths blended smoothly (weight ${c.largePinholeWeight.toFixed(3)} on the large-pinhole limit).`,
        );
      }
      return {
        lateralNm: c.lateralNm,
        axialNm: c.axialNm,
        formulaId: `${modality}-pinhole-blend`,
        formulaVersion: THEORETICAL_FWHM_VERSION,
        notes,
      };
    }
    case "two-photon": {
      if (excitationWavelengthNm === undefined) {
        throw new RangeError("theoreticalFwhm: excitationWavelengthNm is required for two-photon");
      }
      const t = twoPhotonFwhm({ na, immersionRi, excitationWavelengthNm });
      return { ...t, formulaId: "two-photon-zipfel-2003", formulaVersion: THEORETICAL_FWHM_VERSION, notes };
    }
    case "light-sheet": {
      const w = widefieldFwhm({ na, immersionRi, wavelengthNm: emissionWavelengthNm });
      if (lightSheetFwhmNm === undefined) {
        notes.push(
          "Light sheet not specified: the axial width is the detection (widefield) value, an upper bound.",
        );
        return {
          ...w,
          formulaId: "light-sheet-detection-only",
          formulaVersion: THEORETICAL_FWHM_VERSION,
          notes,
        };
      }
      if (!(lightSheetFwhmNm > 0))
        throw new RangeError(`lightSheetFwhmNm must be > 0, got ${lightSheetFwhmNm}`);
      const axialNm = 1 / Math.sqrt(1 / (w.axialNm * w.axialNm) + 1 / (lightSheetFwhmNm * lightSheetFwhmNm));
      notes.push("Axial width combines detection and a Gaussian sheet: 1/F² = 1/F_det² + 1/F_sheet².");
      return {
        lateralNm: w.lateralNm,
        axialNm,
        formulaId: "light-sheet-gaussian-sheet",
        formulaVersion: THEORETICAL_FWHM_VERSION,
        notes,
      };
    }
    default: {
      const never: never = modality;
      throw new RangeError(`theoreticalFwhm: unknown modality ${String(never)}`);
    }
  }
}
