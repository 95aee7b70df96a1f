import {
  createGibsonLanniModel,
  getGibsonLanniPupilTable,
  gibsonLanniAmplitudes,
  gibsonLanniNodeCount,
  gibsonLanniSum,
  checkGibsonLanniPoint,
  type GibsonLanniModel,
} from "./gibson-lanni-model";
import type { GibsonLanniParams } from "./gibson-lanni-params";

/** Options of {@link gibsonLanniLateralProfile}. */
export interface GibsonLanniLateralProfileOptions {
  /** Depth z_p of the point source beyond the coverslip, µm. */
  particleDepthUm: number;
  /** Focus offset z (METHODS §3; nominal focus = −z), µm. */
  focusOffsetUm: number;
  /** Radii at which to evaluate, µm (≥ 0), any order. */
  radiiUm: ArrayLike<number>;
  /** Fixed Gauss–Legendre order; default: adaptive for the largest radius. */
  nodeCount?: number;
}

/**
 * Radial (in-plane) intensity profile of the Gibson–Lanni PSF at one focus position.
 *
 * Notes: the PSF is rotationally symmetric, so one radial profile describes the whole plane.
 * One pupil table (sized for the largest radius) serves every radius.
 *
 * References: Gibson & Lanni, JOSA A 8(10):1601 (1991); METHODS.md §3.
 *
 * @param modelOrParams - prepared model or raw parameters
 * @param options - depth, focus offset and radii (µm)
 * @returns intensities relative to the ideal in-focus peak, same length and order as radiiUm
 * @throws RangeError for invalid depth, offset or radii
 * @example gibsonLanniLateralProfile(model, { particleDepthUm: 0, focusOffsetUm: 0, radiiUm: [0, 0.1, 0.2] })
 */
export function gibsonLanniLateralProfile(
  modelOrParams: GibsonLanniModel | GibsonLanniParams,
  options: GibsonLanniLateralProfileOptions,
): Float64Array {
  const model = createGibsonLanniModel(modelOrParams);
  const { particleDepthUm, focusOffsetUm, radiiUm } = options;
  const out = new Float64Array(radiiUm.length);
  if (radiiUm.length === 0) return out;
  let maxRadiusUm = 0;
  for (let i = 0; i < radiiUm.length; i++) {
    checkGibsonLanniPoint({ radiusUm: radiiUm[i], focusOffsetUm, particleDepthUm });
    maxRadiusUm = Math.max(maxRadiusUm, radiiUm[i]);
  }
  const {
    nodeCount = gibsonLanniNodeCount(model, { radiusUm: maxRadiusUm, focusOffsetUm, particleDepthUm }),
  } = options;
  const table = getGibsonLanniPupilTable(model, nodeCount);
  for (let i = 0; i < radiiUm.length; i++) {
    const amplitudes = gibsonLanniAmplitudes(model, table, radiiUm[i]);
    out[i] = gibsonLanniSum(table, amplitudes, focusOffsetUm, particleDepthUm);
  }
  return out;
}
