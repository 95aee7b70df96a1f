import { axialScalingFactors } from "./axial-scaling-factors";
import {
  findGibsonLanniFocus,
  makeAxialEvaluator,
  matchedAxialFwhmUm,
  type FindGibsonLanniFocusOptions,
} from "./find-gibson-lanni-focus";
import {
  createGibsonLanniModel,
  getGibsonLanniPupilTable,
  gibsonLanniAmplitudes,
  gibsonLanniNodeCount,
  gibsonLanniSum,
  gibsonLanniUniformScan,
  type GibsonLanniModel,
} from "./gibson-lanni-model";
import type { GibsonLanniParams } from "./gibson-lanni-params";

/** Options of {@link gibsonLanniDepthMetrics}. */
export interface GibsonLanniDepthMetricsOptions extends FindGibsonLanniFocusOptions {
  /** Compute the lateral FWHM at the best-focus plane. @default true */
  lateral?: boolean;
  /** Compute the axial side-lobe ratios (METHODS §8). @default true */
  sideLobes?: boolean;
}

/** GL predictions for one source depth. */
export interface GibsonLanniDepthMetrics {
  /** Actual depth of the source beyond the coverslip, µm. */
  depthUm: number;
  /** Nominal focus of the on-axis intensity maximum, µm. */
  nominalFocusUm: number;
  /**
   * ζ = depth/nominal focus (secant factor, METHODS §4.3). At depth 0 it is undefined and the
   * RMS-optimal factor (the small-depth limit) is reported instead.
   */
  focalShiftFactor: number;
  /** Peak intensity relative to the matched, aberration-free in-focus peak (Strehl-like). */
  peakRelative: number;
  /** Axial FWHM of the central lobe of the on-axis profile, in nominal focus units (as in a stack), µm. */
  axialFwhmUm: number;
  /** Lateral FWHM at the best-focus plane, µm (NaN when not computed). */
  lateralFwhmUm: number;
  /** Strongest axial side lobe beyond the bead (away from the coverslip) / peak, within ±4 axial FWHM (NaN when not computed). */
  sideLobeFar: number;
  /** Strongest axial side lobe toward the coverslip / peak (NaN when not computed). */
  sideLobeNear: number;
  /** sideLobeFar − sideLobeNear: > 0 suggests n_s < n_i, < 0 suggests n_s > n_i (METHODS §8). */
  sideLobeAsymmetry: number;
  iterations: number;
  converged: boolean;
  /** Why the figures are (not) trustworthy: focus search state or a missing half-maximum crossing. */
  reason: string;
}

/** Walk from x0 in steps of `step` (sign gives the direction) until f < level, then bisect. */
function halfCrossing(
  f: (x: number) => number,
  x0: number,
  step: number,
  level: number,
  maxSteps: number,
  toleranceUm: number,
): number {
  let inside = x0;
  let outside = Number.NaN;
  for (let i = 1; i <= maxSteps; i++) {
    const x = x0 + i * step;
    if (f(x) < level) {
      outside = x;
      break;
    }
    inside = x;
  }
  if (Number.isNaN(outside)) return Number.NaN;
  for (let i = 0; i < 60 && Math.abs(outside - inside) > toleranceUm; i++) {
    const mid = (inside + outside) / 2;
    if (f(mid) < level) outside = mid;
    else inside = mid;
  }
  return (inside + outside) / 2;
}

/** Strongest local maximum of v beyond the first local minimum after index start, moving by dir (±1). */
function strongestLobe(v: Float64Array, start: number, dir: 1 | -1): number {
  let i = start;
  while (i + dir > 0 && i + dir < v.length - 1 && v[i + dir] <= v[i]) i += dir;
  let best = 0;
  for (let j = i + dir; j > 0 && j < v.length - 1; j += dir) {
    if (v[j] >= v[j - 1] && v[j] >= v[j + 1] && v[j] > 0) {
      // Parabolic refinement of the sampled maximum.
      const denom = v[j - 1] - 2 * v[j] + v[j + 1];
      const peak = denom < 0 ? v[j] - (v[j + 1] - v[j - 1]) ** 2 / (8 * denom) : v[j];
      best = Math.max(best, peak);
    }
  }
  return best;
}

/**
 * Predicted PSF figures for a source at one actual depth, from the Gibson–Lanni model:
 * focal shift, peak intensity, axial and lateral FWHM and the axial side-lobe ratios.
 *
 * Notes:
 * - focus: {@link findGibsonLanniFocus} (on-axis maximum);
 * - axial FWHM: half-maximum crossings of the on-axis profile either side of the peak (walk in
 *   steps of a quarter matched axial FWHM, then bisection), in nominal focus units;
 * - lateral FWHM: half-maximum radius ×2 of the radial profile at the best-focus plane;
 * - side lobes: the on-axis profile is sampled within ±4 axial FWHM of the peak; on each side the
 *   strongest local maximum beyond the central lobe is divided by the peak. "Far" = deeper
 *   nominal focus (away from the coverslip).
 *
 * References: Gibson & Lanni, JOSA A 8:1601 (1991); METHODS.md §3, §4.3, §5, §8 (checks #22–#25).
 *
 * @param modelOrParams - prepared model or raw parameters
 * @param depthUm - actual source depth, µm (≥ 0)
 * @param options - what to compute, iteration cap and tolerance
 * @returns the figures at that depth (lengths in µm)
 * @throws RangeError for a negative depth
 * @example gibsonLanniDepthMetrics(model, 10).axialFwhmUm // 1.297 for oil NA 1.3 → water, λ 520 nm
 */
export function gibsonLanniDepthMetrics(
  modelOrParams: GibsonLanniModel | GibsonLanniParams,
  depthUm: number,
  options: GibsonLanniDepthMetricsOptions = {},
): GibsonLanniDepthMetrics {
  const { lateral = true, sideLobes = true, toleranceUm = 1e-4 } = options;
  const model = createGibsonLanniModel(modelOrParams);
  const p = model.params;
  const focus = findGibsonLanniFocus(model, depthUm, options);
  const fwhm0 = matchedAxialFwhmUm(model);
  const peak = focus.peakRelative;
  const half = peak / 2;

  const reach = 12 * fwhm0 + 0.5 * (focus.windowUm[1] - focus.windowUm[0]);
  const axial = makeAxialEvaluator(
    model,
    depthUm,
    focus.nominalFocusUm - reach,
    focus.nominalFocusUm + reach,
  );
  const maxSteps = Math.ceil(reach / (fwhm0 / 4));
  const upper = halfCrossing(axial.at, focus.nominalFocusUm, fwhm0 / 4, half, maxSteps, toleranceUm);
  const lower = halfCrossing(axial.at, focus.nominalFocusUm, -fwhm0 / 4, half, maxSteps, toleranceUm);
  const axialFwhmUm = upper - lower;

  let lateralFwhmUm = Number.NaN;
  if (lateral) {
    const naEff = p.na * model.rhoMax;
    const lateralScaleUm = p.wavelengthNm / 1000 / naEff;
    const nodeCount = gibsonLanniNodeCount(model, {
      radiusUm: 3 * lateralScaleUm,
      focusOffsetUm: -focus.nominalFocusUm,
      particleDepthUm: depthUm,
    });
    const table = getGibsonLanniPupilTable(model, nodeCount);
    const radial = (r: number) =>
      gibsonLanniSum(table, gibsonLanniAmplitudes(model, table, Math.abs(r)), -focus.nominalFocusUm, depthUm);
    const r = halfCrossing(radial, 0, 0.1 * lateralScaleUm, half, 60, toleranceUm / 10);
    lateralFwhmUm = 2 * r;
  }

  let sideLobeFar = Number.NaN;
  let sideLobeNear = Number.NaN;
  if (sideLobes && Number.isFinite(axialFwhmUm)) {
    const span = 4 * axialFwhmUm;
    const step = Math.max(span / 80, fwhm0 / 6);
    const n = Math.ceil(span / step);
    const first = -(focus.nominalFocusUm - n * step);
    const last = -(focus.nominalFocusUm + n * step);
    const nodeCount = Math.max(
      gibsonLanniNodeCount(model, { radiusUm: 0, focusOffsetUm: first, particleDepthUm: depthUm }),
      gibsonLanniNodeCount(model, { radiusUm: 0, focusOffsetUm: last, particleDepthUm: depthUm }),
    );
    const table = getGibsonLanniPupilTable(model, nodeCount);
    const profile = gibsonLanniUniformScan(table, table.weight, first, -step, 2 * n + 1, depthUm);
    // Index n is the peak; increasing index = deeper nominal focus = far side.
    sideLobeFar = strongestLobe(profile, n, 1) / peak;
    sideLobeNear = strongestLobe(profile, n, -1) / peak;
  }

  const focalShiftFactor =
    depthUm > 0
      ? depthUm / focus.nominalFocusUm
      : axialScalingFactors({ na: p.na, immersionRi: p.immersionRi, sampleRi: p.sampleRi }).rmsOptimal.factor;

  return {
    depthUm,
    nominalFocusUm: focus.nominalFocusUm,
    focalShiftFactor,
    peakRelative: peak,
    axialFwhmUm,
    lateralFwhmUm,
    sideLobeFar,
    sideLobeNear,
    sideLobeAsymmetry: sideLobeFar - sideLobeNear,
    iterations: focus.iterations,
    converged: focus.converged && Number.isFinite(axialFwhmUm),
    reason: !focus.converged
      ? `focus search: ${focus.reason}`
      : Number.isFinite(axialFwhmUm)
        ? "converged"
        : "no axial half-maximum crossing within the search reach",
  };
}
