/**
 * Bessel function of the first kind of order 0 or 1, J₀(x) or J₁(x), for real x.
 *
 * Notes: for |x| < 12 the ascending power series
 * J_ν(x) = Σₖ (−1)ᵏ (x/2)^{2k+ν} / (k! (k+ν)!) is summed to machine precision (the largest term
 * is below 5·10³ there, so cancellation costs at most about 10⁻¹² absolute). For |x| ≥ 12 the
 * Hankel asymptotic expansion J_ν(x) = √(2/(πx))·[P cos ω − Q sin ω], ω = x − νπ/2 − π/4, is
 * summed until its terms stop decreasing; its truncation error is then about e^{−2x} ≲ 10⁻¹⁰.
 * Both branches are accurate to better than 10⁻¹⁰ absolute, far inside the 10⁻⁸ needed by the
 * pupil quadrature.
 *
 * References: Abramowitz & Stegun, Handbook of Mathematical Functions (1964), eq. 9.1.10 (series)
 * and eq. 9.2.5, 9.2.9, 9.2.10 (asymptotic expansion).
 *
 * @param order - 0 or 1
 * @param x - argument (dimensionless)
 * @returns J_order(x)
 * @example besselJInteger(0, 2.404825557695773) // ≈ 0
 */
export function besselJInteger(order: 0 | 1, x: number): number {
  if (Number.isNaN(x)) return Number.NaN;
  // J₀ is even and J₁ is odd.
  const sign = order === 1 && x < 0 ? -1 : 1;
  const ax = Math.abs(x);
  if (ax === Number.POSITIVE_INFINITY) return 0;
  return sign * (ax < SERIES_LIMIT ? series(order, ax) : asymptotic(order, ax));
}

const SERIES_LIMIT = 12;

/** Ascending power series (A&S 9.1.10), summed until the term is negligible. */
function series(order: 0 | 1, x: number): number {
  const halfX = x / 2;
  const q = -halfX * halfX;
  let term = order === 0 ? 1 : halfX;
  let sum = term;
  for (let k = 1; k < 200; k++) {
    term *= q / (k * (k + order));
    sum += term;
    if (Math.abs(term) < 1e-17 * Math.max(1, Math.abs(sum))) break;
  }
  return sum;
}

/**
 * Hankel asymptotic expansion (A&S 9.2.5/9.2.9/9.2.10). The k-th term is
 * a_k = Π_{j=1..k} (μ − (2j−1)²) / (k! (8x)^k) with μ = 4ν²; even k feed P, odd k feed Q with
 * alternating signs. Summation stops at the smallest term (optimal truncation).
 */
function asymptotic(order: 0 | 1, x: number): number {
  const mu = 4 * order * order;
  const eightX = 8 * x;
  let p = 1;
  let q = 0;
  let term = 1;
  let previousMagnitude = Number.POSITIVE_INFINITY;
  for (let k = 1; k < 60; k++) {
    const odd = 2 * k - 1;
    term *= (mu - odd * odd) / (k * eightX);
    const magnitude = Math.abs(term);
    if (magnitude >= previousMagnitude || magnitude < 1e-17) break;
    previousMagnitude = magnitude;
    // k = 1 → +Q, k = 2 → −P, k = 3 → −Q, k = 4 → +P, …
    const phase = k % 4;
    if (phase === 1) q += term;
    else if (phase === 2) p -= term;
    else if (phase === 3) q -= term;
    else p += term;
  }
  const omega = x - (order * Math.PI) / 2 - Math.PI / 4;
  return Math.sqrt(2 / (Math.PI * x)) * (p * Math.cos(omega) - q * Math.sin(omega));
}
