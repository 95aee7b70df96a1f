import { checkPositive } from "./check-optics-inputs";
import { pupilAxialMoments } from "./pupil-axial-moments";

/** One axial scaling factor ζ = Δz_actual/Δz_nominal with the name of its model. */
export interface NamedScalingFactor {
  /** Model name, to be reported with the value. */
  model: "paraxial" | "marginal-ray" | "mean-ray" | "median-ray" | "rms-optimal";
  /** ζ (dimensionless); NaN when the model is undefined for the inputs. */
  factor: number;
}

/** Result of {@link axialScalingFactors}. */
export interface AxialScalingFactors {
  paraxial: NamedScalingFactor;
  marginal: NamedScalingFactor;
  mean: NamedScalingFactor;
  median: NamedScalingFactor;
  rmsOptimal: NamedScalingFactor;
}

const RMS_NODES = 512;

/** ζ for a single ray of sine-space coordinate s: tan θ_i/tan θ_s = √(n_s² − s²)/√(n_i² − s²). */
function rayRatio(s: number, immersionRi: number, sampleRi: number): number {
  return Math.sqrt(sampleRi * sampleRi - s * s) / Math.sqrt(immersionRi * immersionRi - s * s);
}

/**
 * Depth-independent axial scaling factors ζ = Δz_act/Δz_nom for an immersion/sample RI pair.
 *
 * Notes (s = NA·ρ; ζ < 1 stretches the image, n_s < n_i):
 * - paraxial (Carlsson): n_s/n_i;
 * - marginal ray (Visser): √(n_s² − NA²)/√(n_i² − NA²), NaN when NA ≥ min(n_i, n_s);
 * - mean ray: mean of the ray ratio over s_k = (k/100)·NA, k = 1…100 (NaN when NA ≥ n_s);
 * - median ray: the ray ratio at s = NA/2 (NaN when NA ≥ min(n_i, n_s), as the other ray models);
 * - RMS-optimal (wave optics, small aberrations): var(√(n_i² − s²))/cov(√(n_s² − s²), √(n_i² − s²))
 *   over the pupil area (weight ρ dρ, ρ ≤ ρ_max = min(1, n_s/NA, n_i/NA)), by 512-node
 *   Gauss–Legendre quadrature.
 * Near the coverslip the full GL factor is close to the RMS-optimal value; deeper it drifts to
 * the paraxial ratio (see {@link makeNominalToActualDepth} for the depth-dependent factor).
 *
 * References: Carlsson, J Microsc 163:167 (1991); Visser, Oud & Brakenhoff, Optik 90:17 (1992);
 * Hell et al., J Microsc 169:391 (1993); METHODS.md §4.1–4.2 (check values computed there).
 *
 * @param options.na - numerical aperture
 * @param options.immersionRi - immersion RI n_i
 * @param options.sampleRi - sample RI n_s
 * @returns the five factors, each with its model name
 * @throws RangeError for non-positive inputs
 * @example axialScalingFactors({ na: 1.3, immersionRi: 1.518, sampleRi: 1.333 }).paraxial.factor // 0.8781
 */
export function axialScalingFactors(options: {
  na: number;
  immersionRi: number;
  sampleRi: number;
}): AxialScalingFactors {
  const { na, immersionRi, sampleRi } = options;
  checkPositive("na", na);
  checkPositive("immersionRi", immersionRi);
  checkPositive("sampleRi", sampleRi);
  const limit = Math.min(immersionRi, sampleRi);
  const marginal = na < limit ? rayRatio(na, immersionRi, sampleRi) : Number.NaN;
  let mean = Number.NaN;
  if (na < limit) {
    let sum = 0;
    for (let k = 1; k <= 100; k++) sum += rayRatio((k / 100) * na, immersionRi, sampleRi);
    mean = sum / 100;
  }
  // Like METHODS §4.2, the ray models are reported as undefined once part of the pupil is evanescent.
  const median = na < limit ? rayRatio(na / 2, immersionRi, sampleRi) : Number.NaN;
  return {
    paraxial: { model: "paraxial", factor: sampleRi / immersionRi },
    marginal: { model: "marginal-ray", factor: marginal },
    mean: { model: "mean-ray", factor: mean },
    median: { model: "median-ray", factor: median },
    rmsOptimal: { model: "rms-optimal", factor: rmsOptimalScaling(na, immersionRi, sampleRi) },
  };
}

/** RMS-optimal ζ = var(a)/cov(a, b), a = √(n_i² − s²), b = √(n_s² − s²), pupil-area weighted. */
function rmsOptimalScaling(na: number, immersionRi: number, sampleRi: number): number {
  const { varA, covAB } = pupilAxialMoments(na, immersionRi, sampleRi, RMS_NODES);
  return varA / covAB;
}
