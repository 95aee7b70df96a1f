/** Two-sided 95 % Student t quantiles t₀.₉₇₅(ν) for ν = 1…30 (standard table values). */
const T975 = [
  12.706, 4.303, 3.182, 2.776, 2.571, 2.447, 2.365, 2.306, 2.262, 2.228, 2.201, 2.179, 2.16, 2.145, 2.131,
  2.12, 2.11, 2.101, 2.093, 2.086, 2.08, 2.074, 2.069, 2.064, 2.06, 2.056, 2.052, 2.048, 2.045, 2.042,
];

/**
 * Upper 97.5 % quantile of Student's t with ν degrees of freedom (the two-sided 95 % value).
 *
 * Notes: table for ν ≤ 30; above, the Cornish–Fisher expansion
 * t ≈ z + (z³ + z)/(4ν) + (5z⁵ + 16z³ + 3z)/(96ν²) with z = 1.959964 (error < 10⁻³).
 * F(1, ν; 0.95) = t₀.₉₇₅(ν)².
 *
 * References: Abramowitz & Stegun, Table 26.10 and eq. 26.7.5.
 *
 * @param degreesOfFreedom - ν ≥ 1
 * @returns t₀.₉₇₅(ν)
 * @throws RangeError for ν < 1
 * @example studentT975(10) // 2.228
 */
export function studentT975(degreesOfFreedom: number): number {
  if (!(degreesOfFreedom >= 1))
    throw new RangeError(`studentT975: degreesOfFreedom must be ≥ 1, got ${degreesOfFreedom}`);
  const nu = Math.floor(degreesOfFreedom);
  if (nu <= 30) return T975[nu - 1];
  const z = 1.959964;
  return z + (z ** 3 + z) / (4 * nu) + (5 * z ** 5 + 16 * z ** 3 + 3 * z) / (96 * nu * nu);
}
