import { gibsonLanniDepthMetrics } from "./gibson-lanni-depth-metrics";
import { createGibsonLanniModel, type GibsonLanniModel } from "./gibson-lanni-model";
import { makeNominalToActualDepth } from "./make-nominal-to-actual-depth";
import { theoreticalFwhm } from "./theoretical-fwhm";

/** An objective as the planner and advisor see it (generic, no brand names). */
export interface ObjectiveSpec {
  id: string;
  name: string;
  /** Numerical aperture. */
  na: number;
  /** RI of the immersion medium actually used. */
  immersionRi: number;
  /** Design immersion RI n_i* (e.g. the collar setting or the oil the lens was corrected for). @default immersionRi */
  designRi?: number;
  /** Design coverslip thickness, µm. @default 170 */
  coverslipThicknessDesignUm?: number;
  /** Actual coverslip thickness, µm. @default coverslipThicknessDesignUm */
  coverslipThicknessUm?: number;
  /** Coverslip RI. @default 1.5255 */
  coverslipRi?: number;
  /** Design working distance (immersion thickness t_i*), µm. @default 150 */
  workingDistanceUm?: number;
}

/** One planner row, exactly as returned by `POST /api/v1/planner`. */
export interface PlannerRow {
  /** Nominal focus travel below the coverslip reference, µm. */
  depthUm: number;
  /** Actual depth in the sample focused at that travel, µm. */
  actualDepthUm: number;
  /** Predicted lateral FWHM at best focus, µm. */
  lateralFwhmUm: number;
  /** Predicted axial FWHM in stack (nominal) units, µm. */
  axialFwhmUm: number;
  /** Peak intensity relative to the matched aberration-free peak. */
  peakRelative: number;
  /** ζ = actual/nominal depth (secant; RMS-optimal value at depth 0). */
  focalShiftFactor: number;
}

/** Build the GL model of an objective focusing into a sample (internal helper). */
export function objectiveModel(
  objective: ObjectiveSpec,
  sampleRi: number,
  wavelengthNm: number,
): GibsonLanniModel {
  const design = objective.coverslipThicknessDesignUm ?? 170;
  return createGibsonLanniModel({
    na: objective.na,
    wavelengthNm,
    immersionRi: objective.immersionRi,
    immersionRiDesign: objective.designRi ?? objective.immersionRi,
    sampleRi,
    coverslipRi: objective.coverslipRi,
    coverslipThicknessDesignUm: design,
    coverslipThicknessUm: objective.coverslipThicknessUm ?? design,
    workingDistanceDesignUm: objective.workingDistanceUm,
  });
}

/**
 * Medium-planner rows: what an objective/medium pair does with depth (predicted from the
 * Gibson–Lanni model, before anyone images).
 *
 * Notes: the input depths are nominal focus travel; each is converted to actual depth with the GL
 * focal-shift curve ({@link makeNominalToActualDepth}, sampled to the deepest requested depth),
 * and the PSF figures are computed for a source at that actual depth. Axial FWHM is in nominal
 * (stack) units; the emission wavelength sets the PSF (widefield detection).
 *
 * References: Gibson & Lanni, JOSA A 8:1601 (1991); METHODS.md §4.3, §5.
 *
 * @param input.objective - the objective
 * @param input.sampleRi - sample RI (same convention as immersionRi)
 * @param input.wavelengthNm - vacuum emission wavelength, nm
 * @param input.depthsUm - nominal depths, µm (≥ 0)
 * @returns one row per depth, same order
 * @throws RangeError for invalid optics or negative depths
 * @example plannerRows({ objective, sampleRi: 1.38, wavelengthNm: 520, depthsUm: [0, 10, 20] })
 */
export function plannerRows(input: {
  objective: ObjectiveSpec;
  sampleRi: number;
  wavelengthNm: number;
  depthsUm: number[];
}): PlannerRow[] {
  const { objective, sampleRi, wavelengthNm, depthsUm } = input;
  depthsUm.forEach((d, i) => {
    if (!Number.isFinite(d) || d < 0)
      throw new RangeError(`plannerRows: depthsUm[${i}] must be finite and ≥ 0, got ${d}`);
  });
  const model = objectiveModel(objective, sampleRi, wavelengthNm);
  if (depthsUm.length === 0) return [];
  const maxNominal = Math.max(...depthsUm, 1);
  const conversion = makeNominalToActualDepth(model, { maxDepthUm: maxNominal * 2 + 5, sampleCount: 9 });
  return depthsUm.map((depthUm) => {
    const actualDepthUm = conversion.toActualUm(depthUm);
    const m = gibsonLanniDepthMetrics(model, actualDepthUm, { sideLobes: false });
    return {
      depthUm,
      actualDepthUm,
      lateralFwhmUm: m.lateralFwhmUm,
      axialFwhmUm: m.axialFwhmUm,
      peakRelative: m.peakRelative,
      focalShiftFactor: m.focalShiftFactor,
    };
  });
}

/** Diffraction-limited (aberration-free) reference values for the planner, µm. */
export interface DiffractionLimitedReference {
  lateralFwhmUm: number;
  axialFwhmUm: number;
  formulaId: string;
  formulaVersion: string;
  notes: string[];
}

/**
 * Diffraction-limited widefield reference for an objective/medium pair: the theoretical FWHM with
 * the NA capped at the sample RI (see {@link theoreticalFwhm}).
 *
 * References: METHODS.md §2.1–2.2.
 *
 * @returns widths in µm with formula provenance
 * @example diffractionLimitedReference({ objective, sampleRi: 1.333, wavelengthNm: 520 })
 */
export function diffractionLimitedReference(input: {
  objective: ObjectiveSpec;
  sampleRi: number;
  wavelengthNm: number;
}): DiffractionLimitedReference {
  const { objective, sampleRi, wavelengthNm } = input;
  const t = theoreticalFwhm({
    modality: "widefield",
    na: objective.na,
    immersionRi: objective.immersionRi,
    emissionWavelengthNm: wavelengthNm,
    sampleRi,
  });
  return {
    lateralFwhmUm: t.lateralNm / 1000,
    axialFwhmUm: t.axialNm / 1000,
    formulaId: t.formulaId,
    formulaVersion: t.formulaVersion,
    notes: t.notes,
  };
}
