import { gibsonLanniDepthMetrics } from "./gibson-lanni-depth-metrics";
import type { GibsonLanniModel } from "./gibson-lanni-model";
import { objectiveModel, type ObjectiveSpec } from "./planner-rows";

/** Options of {@link rankObjectives}. */
export interface RankObjectivesOptions {
  /** Axial growth over the surface value that defines the "useful depth". @default 1.25 */
  growthLimit?: number;
  /** Deepest depth searched for that growth, µm. @default 300 */
  maxSearchDepthUm?: number;
  /** Depths sampled across the range for the mean figures. @default 5 */
  depthSamples?: number;
}

/** One advisor ranking entry. */
export interface ObjectiveRanking {
  rank: number;
  objectiveId: string;
  name: string;
  /** Axial FWHM at the sample surface (depth 0), µm. */
  surfaceAxialFwhmUm: number;
  /** Axial FWHM at the deepest depth of the range, µm. */
  deepAxialFwhmUm: number;
  /** Peak intensity at the deepest depth, relative to the matched aberration-free peak. */
  deepPeakRelative: number;
  /** Mean axial FWHM over the depth range, µm. */
  meanAxialFwhmUm: number;
  /** Mean peak over the depth range. */
  meanPeakRelative: number;
  /** Actual depth at which the axial FWHM first exceeds growthLimit × the surface value, µm (null: not within maxSearchDepthUm). */
  usefulDepthUm: number | null;
  /** Plain-language reason for the place in the ranking. */
  reason: string;
}

function usefulDepth(
  model: GibsonLanniModel,
  surface: number,
  limit: number,
  maxDepthUm: number,
): number | null {
  const exceeds = (d: number) =>
    gibsonLanniDepthMetrics(model, d, { lateral: false, sideLobes: false }).axialFwhmUm > limit * surface;
  let lo = 0;
  let hi = 1;
  while (!exceeds(hi)) {
    lo = hi;
    if (hi >= maxDepthUm) return null;
    hi = Math.min(maxDepthUm, hi * 2);
  }
  for (let i = 0; i < 20 && hi - lo > 0.1; i++) {
    const mid = (lo + hi) / 2;
    if (exceeds(mid)) hi = mid;
    else lo = mid;
  }
  return (lo + hi) / 2;
}

/**
 * Advisor: rank objectives for imaging a medium over a depth range, by predicted axial FWHM and
 * signal at depth (Gibson–Lanni model, widefield emission PSF).
 *
 * Notes: primary key is the axial FWHM at the deepest depth of the range (stack units); when two
 * lenses are within 5 % of each other the one with more peak signal there ranks first. For each
 * lens the "useful depth" is where the axial FWHM first exceeds 1.25 × its own surface value
 * (doubling scan, then bisection to 0.1 µm). Depths are actual depths in the sample. The UI adds
 * safety cautions; none are produced here.
 *
 * References: Gibson & Lanni, JOSA A 8:1601 (1991); Diel, Lichtman & Richardson, Nat Protoc
 * 15:2773 (2020) (matching immersion to sample RI); METHODS.md §4–5.
 *
 * @param input.objectives - candidate objectives
 * @param input.sampleRi - sample RI
 * @param input.wavelengthNm - vacuum emission wavelength, nm
 * @param input.depthRangeUm - [shallowest, deepest] actual depth of interest, µm
 * @param options - growth limit, search depth, samples
 * @returns ranking entries, best first
 * @throws RangeError for an empty list or an invalid range
 * @example rankObjectives({ objectives, sampleRi: 1.38, wavelengthNm: 520, depthRangeUm: [0, 50] })
 */
export function rankObjectives(
  input: {
    objectives: ObjectiveSpec[];
    sampleRi: number;
    wavelengthNm: number;
    depthRangeUm: [number, number];
  },
  options: RankObjectivesOptions = {},
): ObjectiveRanking[] {
  const { growthLimit = 1.25, maxSearchDepthUm = 300, depthSamples = 5 } = options;
  const { objectives, sampleRi, wavelengthNm, depthRangeUm } = input;
  const [d0, d1] = depthRangeUm;
  if (objectives.length === 0) throw new RangeError("rankObjectives: objectives must not be empty");
  if (!(d0 >= 0 && d1 >= d0 && Number.isFinite(d1))) {
    throw new RangeError(`rankObjectives: depthRangeUm must satisfy 0 ≤ min ≤ max, got [${d0}, ${d1}]`);
  }
  if (!Number.isInteger(depthSamples) || depthSamples < 2)
    throw new RangeError(`rankObjectives: depthSamples must be an integer ≥ 2, got ${depthSamples}`);
  const entries = objectives.map((objective) => {
    const model = objectiveModel(objective, sampleRi, wavelengthNm);
    const surface = gibsonLanniDepthMetrics(model, 0, { lateral: false, sideLobes: false });
    let sumAxial = 0;
    let sumPeak = 0;
    let deep = surface;
    for (let k = 0; k < depthSamples; k++) {
      const d = d0 + ((d1 - d0) * k) / (depthSamples - 1);
      const m = gibsonLanniDepthMetrics(model, d, { lateral: false, sideLobes: false });
      sumAxial += m.axialFwhmUm;
      sumPeak += m.peakRelative;
      if (k === depthSamples - 1) deep = m;
    }
    return {
      objective,
      surfaceAxialFwhmUm: surface.axialFwhmUm,
      deepAxialFwhmUm: deep.axialFwhmUm,
      deepPeakRelative: deep.peakRelative,
      meanAxialFwhmUm: sumAxial / depthSamples,
      meanPeakRelative: sumPeak / depthSamples,
      usefulDepthUm: usefulDepth(model, surface.axialFwhmUm, growthLimit, maxSearchDepthUm),
    };
  });
  entries.sort((a, b) => {
    const ratio = a.deepAxialFwhmUm / b.deepAxialFwhmUm;
    if (ratio < 0.95 || ratio > 1 / 0.95) return a.deepAxialFwhmUm - b.deepAxialFwhmUm;
    return b.deepPeakRelative - a.deepPeakRelative;
  });
  const best = entries[0];
  return entries.map((e, i) => {
    const o = e.objective;
    const growth = ((e.deepAxialFwhmUm / e.surfaceAxialFwhmUm - 1) * 100).toFixed(0);
    const useful =
      e.usefulDepthUm === null
        ? `its axial width stays within ${Math.round((growthLimit - 1) * 100)} % of the surface value down to at least ${maxSearchDepthUm} µm`
        : `its axial width grows by ${Math.round((growthLimit - 1) * 100)} % at about ${e.usefulDepthUm.toFixed(1)} µm`;
    const mismatch = Math.abs(o.immersionRi - sampleRi);
    const match =
      mismatch < 0.01
        ? "immersion matches the sample RI"
        : `immersion RI ${o.immersionRi.toFixed(3)} vs sample ${sampleRi.toFixed(3)} (Δn ${mismatch.toFixed(3)})`;
    const lead =
      i === 0
        ? "Best choice: the narrowest axial PSF at the deepest planned depth"
        : `${((e.deepAxialFwhmUm / best.deepAxialFwhmUm - 1) * 100).toFixed(0)} % wider axially than the best at depth`;
    const reason =
      `${lead}. NA ${o.na}, ${match}: axial FWHM ${e.deepAxialFwhmUm.toFixed(2)} µm at ${d1} µm ` +
      `(${growth} % over its surface value), ${Math.round(e.deepPeakRelative * 100)} % of the ideal peak there; ${useful}.`;
    return {
      rank: i + 1,
      objectiveId: o.id,
      name: o.name,
      surfaceAxialFwhmUm: e.surfaceAxialFwhmUm,
      deepAxialFwhmUm: e.deepAxialFwhmUm,
      deepPeakRelative: e.deepPeakRelative,
      meanAxialFwhmUm: e.meanAxialFwhmUm,
      meanPeakRelative: e.meanPeakRelative,
      usefulDepthUm: e.usefulDepthUm,
      reason,
    };
  });
}
