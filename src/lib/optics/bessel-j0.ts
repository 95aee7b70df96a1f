import { besselJInteger } from "./bessel-integer-order";

/**
 * Bessel function of the first kind, order zero: J₀(x).
 *
 * Notes: power series for |x| < 12, Hankel asymptotic expansion beyond; absolute error below
 * 10⁻¹⁰ for all real x (tested against two independent implementations).
 *
 * References: Abramowitz & Stegun (1964), eq. 9.1.10 and 9.2.5.
 *
 * @param x - argument (dimensionless)
 * @returns J₀(x), dimensionless
 * @example besselJ0(0) // 1
 */
export function besselJ0(x: number): number {
  return besselJInteger(0, x);
}
