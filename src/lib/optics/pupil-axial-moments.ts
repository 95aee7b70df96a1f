import { gaussLegendre } from "./gauss-legendre";

/** Pupil-area-weighted moments of the axial wave-vector terms a = √(n_i² − s²), b = √(n_s² − s²). */
export interface PupilAxialMoments {
  meanA: number;
  meanB: number;
  varA: number;
  varB: number;
  covAB: number;
}

/**
 * Means, variances and covariance of a = √(n_i² − s²) and b = √(n_s² − s²), s = NA·ρ, over
 * the pupil area (weight ρ dρ, ρ ≤ ρ_max = min(1, n_s/NA, n_i/NA), so no part of the pupil
 * is evanescent), by Gauss–Legendre quadrature. Shared by the RMS-optimal axial scaling
 * factor and the residual RMS wavefront of an RI mismatch.
 *
 * References: METHODS.md §4.2 and §5; Press et al., Numerical Recipes, 3rd ed. (2007), §4.6.
 *
 * @param na - numerical aperture (> 0; checked by the callers)
 * @param immersionRi - immersion RI n_i
 * @param sampleRi - sample RI n_s
 * @param nodes - quadrature order @default 512
 * @returns the five moments (dimensionless, as the RIs)
 * @example pupilAxialMoments(1.3, 1.518, 1.333).varA
 */
export function pupilAxialMoments(
  na: number,
  immersionRi: number,
  sampleRi: number,
  nodes = 512,
): PupilAxialMoments {
  const rhoMax = Math.min(1, sampleRi / na, immersionRi / na);
  const rule = gaussLegendre(nodes);
  let w = 0;
  let sa = 0;
  let sb = 0;
  let saa = 0;
  let sbb = 0;
  let sab = 0;
  for (let j = 0; j < nodes; j++) {
    const rho = (rhoMax / 2) * (rule.nodes[j] + 1);
    const weight = rule.weights[j] * rho;
    const s = na * rho;
    const a = Math.sqrt(Math.max(0, immersionRi * immersionRi - s * s));
    const b = Math.sqrt(Math.max(0, sampleRi * sampleRi - s * s));
    w += weight;
    sa += weight * a;
    sb += weight * b;
    saa += weight * a * a;
    sbb += weight * b * b;
    sab += weight * a * b;
  }
  const meanA = sa / w;
  const meanB = sb / w;
  return {
    meanA,
    meanB,
    varA: saa / w - meanA * meanA,
    varB: sbb / w - meanB * meanB,
    covAB: sab / w - meanA * meanB,
  };
}
