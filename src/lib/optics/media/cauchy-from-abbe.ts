/** Two-term Cauchy coefficients n(λ) = a + b/λ² (λ in µm). */
export interface CauchyTwoTerm {
  a: number;
  /** µm² */
  b: number;
}

/**
 * Two-term Cauchy dispersion that reproduces a principal index and an Abbe number.
 *
 * Notes: ν = (n_ref − 1)/(n_short − n_long) with n_short − n_long = b(1/λ_short² − 1/λ_long²), so
 * b = (n_ref − 1)/(ν (1/λ_short² − 1/λ_long²)) and a = n_ref − b/λ_ref². Default lines are the
 * ISO e-line set: λ_ref = 546.07 nm, F′ = 479.99 nm, C′ = 643.85 nm (line wavelengths from memory).
 * For the d-line set use 587.56 / 486.13 / 656.28 nm.
 *
 * References: METHODS.md §9.2 and §9.6 (oil: A = 1.49752, B = 0.006106 µm², computed there).
 *
 * @param referenceRi - n at the reference line
 * @param abbeNumber - ν for the line set
 * @param lines - reference, short and long wavelengths, nm
 * @returns Cauchy a and b (µm²)
 * @example cauchyFromAbbe(1.518, 44) // { a: 1.49752, b: 0.006106 }
 */
export function cauchyFromAbbe(
  referenceRi: number,
  abbeNumber: number,
  lines: { referenceNm: number; shortNm: number; longNm: number } = {
    referenceNm: 546.07,
    shortNm: 479.99,
    longNm: 643.85,
  },
): CauchyTwoTerm {
  if (!(abbeNumber > 0)) throw new RangeError(`cauchyFromAbbe: abbeNumber must be > 0, got ${abbeNumber}`);
  const inv2 = (nm: number) => 1 / (nm / 1000) ** 2;
  const b = (referenceRi - 1) / (abbeNumber * (inv2(lines.shortNm) - inv2(lines.longNm)));
  return { a: referenceRi - b * inv2(lines.referenceNm), b };
}
