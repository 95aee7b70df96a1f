import { findGibsonLanniFocus } from "./find-gibson-lanni-focus";
import { createGibsonLanniModel, type GibsonLanniModel } from "./gibson-lanni-model";
import type { GibsonLanniParams } from "./gibson-lanni-params";
import { createMonotoneInterpolator } from "./monotone-interpolator";

/** Options of {@link makeNominalToActualDepth}. */
export interface MakeNominalToActualDepthOptions {
  /** Deepest actual depth sampled, µm; beyond it the mapping extrapolates linearly. @default 100 */
  maxDepthUm?: number;
  /** Number of sampled depths (quadratically spaced, denser near the coverslip). @default 9 */
  sampleCount?: number;
}

/** A depth conversion built from the GL focal-shift curve. */
export interface NominalToActualDepth {
  /** Model name to report with the factor. */
  model: "gibson-lanni-peak";
  /** Actual depth (µm) for a nominal focus travel (µm below the coverslip reference); ≥ 0. */
  toActualUm: (nominalUm: number) => number;
  /** Nominal focus travel (µm) that focuses a source at the given actual depth (µm). */
  toNominalUm: (actualUm: number) => number;
  /** Local factor ζ = d(actual)/d(nominal) at a nominal position (for converting z-steps). */
  localFactorAt: (nominalUm: number) => number;
  /** The sampled curve (actual depth, nominal focus of the intensity maximum), µm. */
  samples: { actualDepthUm: number[]; nominalFocusUm: number[] };
  /** False if some focus search did not converge or the curve was not monotone. */
  converged: boolean;
}

/**
 * Build a monotone conversion between nominal focus travel and actual depth from the
 * Gibson–Lanni focal-shift curve (the depth-dependent axial scaling, METHODS §4.3).
 *
 * Notes: the nominal focus of the on-axis intensity maximum is computed at `sampleCount`
 * actual depths dᵢ = maxDepth·(i/(n−1))² and joined by monotone cubic (PCHIP) interpolation;
 * nominal → actual is the exact inverse of that interpolant (bisection). Below the nominal focus of a source at the coverslip the actual depth is clamped
 * at 0; beyond the last sample the end slope extrapolates linearly. The psf engine can call
 * `toActualUm` per bead.
 *
 * References: Hell et al., J Microsc 169:391 (1993); Loginov et al., Optica (2024),
 * doi:10.1364/OPTICA.520595 (depth-dependent factor; model details from memory); METHODS.md §4.3.
 *
 * @param modelOrParams - prepared model or raw parameters
 * @param options - sampled depth range and count
 * @returns conversion functions, the samples and the model name
 * @throws RangeError for a non-positive maxDepthUm or sampleCount < 3
 * @example makeNominalToActualDepth(oilToWater).toActualUm(12.233) // ≈ 10
 */
export function makeNominalToActualDepth(
  modelOrParams: GibsonLanniModel | GibsonLanniParams,
  options: MakeNominalToActualDepthOptions = {},
): NominalToActualDepth {
  const { maxDepthUm = 100, sampleCount = 9 } = options;
  if (!(maxDepthUm > 0) || !Number.isFinite(maxDepthUm)) {
    throw new RangeError(`makeNominalToActualDepth: maxDepthUm must be > 0, got ${maxDepthUm}`);
  }
  if (!Number.isInteger(sampleCount) || sampleCount < 3) {
    throw new RangeError(`makeNominalToActualDepth: sampleCount must be an integer ≥ 3, got ${sampleCount}`);
  }
  const model = createGibsonLanniModel(modelOrParams);
  const actualDepthUm: number[] = [];
  const nominalFocusUm: number[] = [];
  let converged = true;
  for (let i = 0; i < sampleCount; i++) {
    const d = maxDepthUm * (i / (sampleCount - 1)) ** 2;
    const focus = findGibsonLanniFocus(model, d);
    converged &&= focus.converged;
    // Keep the curve strictly increasing; a non-monotone sample (never seen in practice) is dropped.
    if (nominalFocusUm.length > 0 && focus.nominalFocusUm <= nominalFocusUm[nominalFocusUm.length - 1]) {
      converged = false;
      continue;
    }
    actualDepthUm.push(d);
    nominalFocusUm.push(focus.nominalFocusUm);
  }
  // One interpolant (actual → nominal, the direction in which the curve was sampled); the other
  // direction is its exact numerical inverse, so the two conversions round-trip.
  const toNominal = createMonotoneInterpolator(actualDepthUm, nominalFocusUm);
  const toActual = (nominalUm: number): number => {
    let lo = 0;
    let hi = Math.max(1, actualDepthUm[actualDepthUm.length - 1]);
    if (nominalUm <= toNominal(0)) return 0;
    while (toNominal(hi) < nominalUm) hi *= 2;
    for (let i = 0; i < 200 && hi - lo > 1e-10 * Math.max(1, hi); i++) {
      const mid = (lo + hi) / 2;
      if (toNominal(mid) < nominalUm) lo = mid;
      else hi = mid;
    }
    return (lo + hi) / 2;
  };
  const h = 1e-3;
  return {
    model: "gibson-lanni-peak",
    toActualUm: toActual,
    toNominalUm: (actualUm: number) => toNominal(actualUm),
    localFactorAt: (nominalUm: number) =>
      (2 * h) / (toNominal(toActual(nominalUm) + h) - toNominal(toActual(nominalUm) - h)),
    samples: { actualDepthUm, nominalFocusUm },
    converged,
  };
}
