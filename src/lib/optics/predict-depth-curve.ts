import {
  gibsonLanniDepthMetrics,
  type GibsonLanniDepthMetrics,
  type GibsonLanniDepthMetricsOptions,
} from "./gibson-lanni-depth-metrics";
import { createGibsonLanniModel, type GibsonLanniModel } from "./gibson-lanni-model";
import type { GibsonLanniParams } from "./gibson-lanni-params";

/**
 * Gibson–Lanni predictions (focal shift, peak, axial and lateral FWHM, side lobes) against actual
 * source depth, for one objective/medium pair.
 *
 * Notes: one prepared model (cached pupil tables) serves every depth; see
 * {@link gibsonLanniDepthMetrics} for the definitions. Typical cost is 1–3 ms per depth.
 *
 * References: Gibson & Lanni, JOSA A 8:1601 (1991); METHODS.md §4.3 and §5 tables.
 *
 * @param modelOrParams - prepared model or raw parameters
 * @param depthsUm - actual depths, µm (≥ 0)
 * @param options - forwarded to {@link gibsonLanniDepthMetrics}
 * @returns one row per depth, same order
 * @throws RangeError for a negative depth or invalid parameters
 * @example predictDepthCurve({ na: 1.3, wavelengthNm: 520, immersionRi: 1.518, sampleRi: 1.333 }, [0, 10, 20])
 */
export function predictDepthCurve(
  modelOrParams: GibsonLanniModel | GibsonLanniParams,
  depthsUm: ArrayLike<number>,
  options: GibsonLanniDepthMetricsOptions = {},
): GibsonLanniDepthMetrics[] {
  const model = createGibsonLanniModel(modelOrParams);
  const rows: GibsonLanniDepthMetrics[] = [];
  for (let i = 0; i < depthsUm.length; i++) rows.push(gibsonLanniDepthMetrics(model, depthsUm[i], options));
  return rows;
}
