import {
  createGibsonLanniModel,
  getGibsonLanniPupilTable,
  gibsonLanniAmplitudes,
  gibsonLanniNodeCount,
  gibsonLanniSum,
  gibsonLanniUniformScan,
  checkGibsonLanniPoint,
  type GibsonLanniModel,
} from "./gibson-lanni-model";
import type { GibsonLanniParams } from "./gibson-lanni-params";

/** Options of {@link gibsonLanniAxialProfile}. */
export interface GibsonLanniAxialProfileOptions {
  /** Depth z_p of the point source beyond the coverslip, µm. */
  particleDepthUm: number;
  /** Focus offsets z (METHODS §3; nominal focus = −z), µm, any order. */
  focusOffsetsUm: ArrayLike<number>;
  /** Lateral radius of the profile, µm. @default 0 (on axis) */
  radiusUm?: number;
  /** Fixed Gauss–Legendre order; default: adaptive, the largest needed over the offsets. */
  nodeCount?: number;
}

/**
 * Axial (through-focus) intensity profile of the Gibson–Lanni PSF at a fixed radius.
 *
 * Notes: one pupil table and one set of J₀ amplitudes serve every focus position, so the cost
 * is one complex sum per sample; equally spaced offsets (≥ 8) use phasor rotation instead of a
 * cosine and a sine per node. The adaptive node count is taken at the two extreme offsets
 * (the phase total variation is convex in z, so the extremes bound it).
 *
 * References: Gibson & Lanni, JOSA A 8(10):1601 (1991); METHODS.md §3.
 *
 * @param modelOrParams - prepared model or raw parameters
 * @param options - depth, focus offsets (µm) and radius
 * @returns intensities relative to the ideal in-focus peak, same length and order as focusOffsetsUm
 * @throws RangeError for invalid depth, radius or offsets
 * @example gibsonLanniAxialProfile(model, { particleDepthUm: 10, focusOffsetsUm: [-13, -12, -11] })
 */
export function gibsonLanniAxialProfile(
  modelOrParams: GibsonLanniModel | GibsonLanniParams,
  options: GibsonLanniAxialProfileOptions,
): Float64Array {
  const model = createGibsonLanniModel(modelOrParams);
  const { particleDepthUm, focusOffsetsUm, radiusUm = 0 } = options;
  const out = new Float64Array(focusOffsetsUm.length);
  if (focusOffsetsUm.length === 0) return out;
  let lo = Number.POSITIVE_INFINITY;
  let hi = Number.NEGATIVE_INFINITY;
  for (let i = 0; i < focusOffsetsUm.length; i++) {
    const z = focusOffsetsUm[i];
    checkGibsonLanniPoint({ radiusUm, focusOffsetUm: z, particleDepthUm });
    lo = Math.min(lo, z);
    hi = Math.max(hi, z);
  }
  const {
    nodeCount = Math.max(
      gibsonLanniNodeCount(model, { radiusUm, focusOffsetUm: lo, particleDepthUm }),
      gibsonLanniNodeCount(model, { radiusUm, focusOffsetUm: hi, particleDepthUm }),
    ),
  } = options;
  const table = getGibsonLanniPupilTable(model, nodeCount);
  const amplitudes = gibsonLanniAmplitudes(model, table, radiusUm);
  if (isUniform(focusOffsetsUm)) {
    const step = focusOffsetsUm.length > 1 ? focusOffsetsUm[1] - focusOffsetsUm[0] : 0;
    out.set(gibsonLanniUniformScan(table, amplitudes, focusOffsetsUm[0], step, out.length, particleDepthUm));
    return out;
  }
  for (let i = 0; i < focusOffsetsUm.length; i++) {
    out[i] = gibsonLanniSum(table, amplitudes, focusOffsetsUm[i], particleDepthUm);
  }
  return out;
}

/** True for ≥ 8 equally spaced values (relative spacing error < 10⁻⁹), where the phasor scan pays off. */
function isUniform(values: ArrayLike<number>): boolean {
  if (values.length < 8) return false;
  const step = values[1] - values[0];
  if (step === 0) return false;
  for (let i = 2; i < values.length; i++) {
    if (Math.abs(values[i] - values[i - 1] - step) > 1e-9 * Math.abs(step)) return false;
  }
  return true;
}
