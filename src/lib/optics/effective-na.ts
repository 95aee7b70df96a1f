import { checkApertureAndIndex, checkPositive } from "./check-optics-inputs";

/** Result of {@link effectiveNa}. */
export interface EffectiveNaResult {
  /** min(NA, n_s): the largest NA that propagates in the sample. */
  na: number;
  /** True when the sample RI cut the nominal NA (supercritical rays are evanescent in the sample). */
  capped: boolean;
}

/**
 * Effective numerical aperture in the sample: NA capped at the sample RI.
 *
 * Notes: rays with n_i sin θ > n_s are totally internally reflected at the coverslip/sample
 * interface, so for an oil NA 1.4 lens focusing into water only NA ≤ 1.333 reaches the focus
 * (METHODS §4.3 practical rules; ρ_max of the GL model, §3).
 *
 * References: METHODS.md §3 (ρ_max) and §4.3; Gibson & Lanni, JOSA A 8:1601 (1991).
 *
 * @param na - nominal numerical aperture
 * @param immersionRi - immersion RI the lens is used with
 * @param sampleRi - sample RI (omit for "no cap")
 * @returns the effective NA and whether it was capped
 * @throws RangeError when na > immersionRi or a value is not positive
 * @example effectiveNa(1.4, 1.518, 1.333) // { na: 1.333, capped: true }
 */
export function effectiveNa(na: number, immersionRi: number, sampleRi?: number): EffectiveNaResult {
  checkApertureAndIndex(na, immersionRi);
  if (sampleRi === undefined) return { na, capped: false };
  checkPositive("sampleRi", sampleRi);
  return sampleRi < na ? { na: sampleRi, capped: true } : { na, capped: false };
}
