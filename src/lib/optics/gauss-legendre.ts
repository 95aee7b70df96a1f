/** Gauss–Legendre nodes and weights on [−1, 1]. */
export interface GaussLegendreRule {
  /** Nodes xᵢ in ascending order, length n. */
  nodes: Float64Array;
  /** Weights wᵢ (sum 2), length n. */
  weights: Float64Array;
}

const cache = new Map<number, GaussLegendreRule>();

/**
 * Gauss–Legendre quadrature rule of order n on [−1, 1]: ∫ f ≈ Σ wᵢ f(xᵢ), exact for
 * polynomials of degree ≤ 2n − 1. Rules are cached per n (do not mutate the returned arrays).
 *
 * Notes: each root of Pₙ is found by Newton iteration from the Chebyshev-like guess
 * cos(π(i − ¼)/(n + ½)), with Pₙ and Pₙ′ from the three-term recurrence; wᵢ = 2/((1 − xᵢ²)Pₙ′(xᵢ)²).
 *
 * References: Press et al., Numerical Recipes, 3rd ed. (2007), §4.6; Abramowitz & Stegun 25.4.29.
 *
 * @param n - number of nodes (integer ≥ 1)
 * @returns the cached rule (shared; treat as read-only)
 * @throws RangeError when n is not an integer ≥ 1
 * @example gaussLegendre(2).nodes // [−0.5773…, 0.5773…]
 */
export function gaussLegendre(n: number): GaussLegendreRule {
  if (!Number.isInteger(n) || n < 1) {
    throw new RangeError(`gaussLegendre: n must be an integer ≥ 1, got ${n}`);
  }
  const cached = cache.get(n);
  if (cached) return cached;
  const nodes = new Float64Array(n);
  const weights = new Float64Array(n);
  const half = Math.floor((n + 1) / 2);
  for (let i = 0; i < half; i++) {
    let x = Math.cos((Math.PI * (i + 0.75)) / (n + 0.5));
    let derivative = 0;
    for (let iteration = 0; iteration < 100; iteration++) {
      let p0 = 1;
      let p1 = x;
      for (let k = 2; k <= n; k++) {
        const p2 = ((2 * k - 1) * x * p1 - (k - 1) * p0) / k;
        p0 = p1;
        p1 = p2;
      }
      const pn = n === 1 ? x : p1;
      const pnm1 = n === 1 ? 1 : p0;
      derivative = (n * (x * pn - pnm1)) / (x * x - 1);
      const step = pn / derivative;
      x -= step;
      if (Math.abs(step) < 1e-15) break;
    }
    const w = 2 / ((1 - x * x) * derivative * derivative);
    nodes[i] = -x;
    nodes[n - 1 - i] = x;
    weights[i] = w;
    weights[n - 1 - i] = w;
  }
  const rule = { nodes, weights };
  cache.set(n, rule);
  return rule;
}
