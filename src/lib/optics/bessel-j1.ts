import { besselJInteger } from "./bessel-integer-order";

/**
 * Bessel function of the first kind, order one: J₁(x).
 *
 * Notes: power series for |x| < 12, Hankel asymptotic expansion beyond; absolute error below
 * 10⁻¹⁰ for all real x. J₁ is odd: J₁(−x) = −J₁(x). The Airy pattern is [2J₁(v)/v]².
 *
 * References: Abramowitz & Stegun (1964), eq. 9.1.10 and 9.2.5.
 *
 * @param x - argument (dimensionless)
 * @returns J₁(x), dimensionless
 * @example besselJ1(3.8317059702075125) // ≈ 0 (first zero, j₁,₁)
 */
export function besselJ1(x: number): number {
  return besselJInteger(1, x);
}
