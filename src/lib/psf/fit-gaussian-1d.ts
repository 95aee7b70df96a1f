import type { FitStopReason } from "./analysis-types";
import { fitModel, type IndexedModel } from "./fit-model";

/** Options of {@link fitGaussian1d}. */
export interface FitGaussian1dOptions {
  /** Sample coordinates (same unit as the returned centre/σ). @default 0, 1, 2, … */
  positions?: ArrayLike<number>;
  /** @default 30 */
  maxIterations?: number;
  /** σ bounds in position units. @default [0.25·step, span] */
  sigmaMin?: number;
  sigmaMax?: number;
}

/** Result of {@link fitGaussian1d}; units of `positions` for centre and σ, counts for levels. */
export interface Gaussian1dFit {
  background: number;
  amplitude: number;
  centre: number;
  sigma: number;
  backgroundSe: number;
  amplitudeSe: number;
  centreSe: number;
  sigmaSe: number;
  r2: number;
  sse: number;
  /** σ ended within 1 % of a bound. */
  sigmaAtBound: boolean;
  iterations: number;
  converged: boolean;
  reason: FitStopReason;
}

/** f(t) = B + A·exp(−(t − μ)²/(2σ²)) over indexed positions, params [B, A, μ, σ]. */
function gaussian1dModel(t: ArrayLike<number>): IndexedModel {
  return {
    nParams: 4,
    value(p, i) {
      const d = t[i] - p[2];
      return p[0] + p[1] * Math.exp((-d * d) / (2 * p[3] * p[3]));
    },
    gradient(p, i, out) {
      const d = t[i] - p[2];
      const s2 = p[3] * p[3];
      const e = Math.exp((-d * d) / (2 * s2));
      out[0] = 1;
      out[1] = e;
      out[2] = (p[1] * e * d) / s2;
      out[3] = (p[1] * e * d * d) / (s2 * p[3]);
    },
  };
}

/**
 * Fit a Gaussian plus constant offset to a 1D profile, seeded from the data's moments.
 *
 * @param profile - intensities (counts), length ≥ 5
 * @param options - positions, iterations, σ bounds
 * @returns background B, amplitude A, centre μ, σ with standard errors, R², convergence
 *
 * Notes: model B + A·exp(−(t − μ)²/(2σ²)); FWHM = 2√(2 ln 2)·σ. Seeds: B = the lower of the
 * two end means, A = max − B, μ = intensity-weighted centroid of the part above half maximum,
 * σ = half-maximum width / 2.3548 (more robust than the second moment when the window clips
 * the tails). Bounds: A ≥ 0, μ inside the window, σ in [sigmaMin, sigmaMax].
 * References: METHODS.md §8 (model, seeding from moments, bounds on σ) — common practice.
 * @example
 * fitGaussian1d([100, 120, 400, 900, 400, 120, 100]).sigma; // ≈ 0.9
 */
export function fitGaussian1d(profile: ArrayLike<number>, options: FitGaussian1dOptions = {}): Gaussian1dFit {
  const n = profile.length;
  let positions = options.positions;
  if (!positions) {
    const idx = new Float64Array(n);
    for (let i = 0; i < n; i++) idx[i] = i;
    positions = idx;
  }
  const { maxIterations = 30 } = options;
  if (positions.length !== n)
    throw new RangeError(`fitGaussian1d: positions length ${positions.length} ≠ profile length ${n}`);
  const step = n > 1 ? Math.abs(positions[n - 1] - positions[0]) / (n - 1) : 1;
  const span = n > 1 ? Math.abs(positions[n - 1] - positions[0]) : 1;
  const sigmaMin = options.sigmaMin ?? 0.25 * step;
  const sigmaMax = options.sigmaMax ?? span;
  const seed = seedGaussian1d(profile, positions);
  const s0 = Math.min(Math.max(seed.sigma, sigmaMin * 1.5), sigmaMax / 1.5);
  const lo = Math.min(positions[0], positions[n - 1]);
  const hi = Math.max(positions[0], positions[n - 1]);
  const ampMax = Math.max(1, seed.amplitude) * 10 + 1;
  const fit = fitModel(profile, gaussian1dModel(positions), {
    initialValues: [seed.background, seed.amplitude, seed.centre, s0],
    minValues: [-Math.abs(seed.background) * 10 - ampMax, 0, lo, sigmaMin],
    maxValues: [Math.abs(seed.background) * 10 + ampMax, ampMax, hi, sigmaMax],
    maxIterations,
  });
  const [B, A, mu, sigma] = fit.params;
  return {
    background: B,
    amplitude: A,
    centre: mu,
    sigma: Math.abs(sigma),
    backgroundSe: fit.standardErrors[0],
    amplitudeSe: fit.standardErrors[1],
    centreSe: fit.standardErrors[2],
    sigmaSe: fit.standardErrors[3],
    r2: fit.r2,
    sse: fit.sse,
    sigmaAtBound: Math.abs(sigma) <= sigmaMin * 1.01 || Math.abs(sigma) >= sigmaMax * 0.99,
    iterations: fit.iterations,
    converged: fit.converged,
    reason: fit.reason,
  };
}

/** Moment-based starting values for a 1D Gaussian + offset (see {@link fitGaussian1d}). */
export function seedGaussian1d(
  profile: ArrayLike<number>,
  positions: ArrayLike<number>,
): { background: number; amplitude: number; centre: number; sigma: number } {
  const n = profile.length;
  const k = Math.max(1, Math.floor(n / 8));
  let left = 0;
  let right = 0;
  for (let i = 0; i < k; i++) {
    left += profile[i];
    right += profile[n - 1 - i];
  }
  const background = Math.min(left, right) / k;
  let iMax = 0;
  for (let i = 1; i < n; i++) if (profile[i] > profile[iMax]) iMax = i;
  const amplitude = Math.max(profile[iMax] - background, 1e-12);
  const half = background + amplitude / 2;
  let sw = 0;
  let swx = 0;
  for (let i = 0; i < n; i++) {
    const w = profile[i] - half;
    if (w > 0) {
      sw += w;
      swx += w * positions[i];
    }
  }
  const centre = sw > 0 ? swx / sw : positions[iMax];
  // Half-maximum crossings by linear interpolation walking out from the maximum.
  let a = iMax;
  while (a > 0 && profile[a - 1] > half) a--;
  let b = iMax;
  while (b < n - 1 && profile[b + 1] > half) b++;
  const xl =
    a > 0 ? interpCross(positions[a - 1], profile[a - 1], positions[a], profile[a], half) : positions[0];
  const xr =
    b < n - 1
      ? interpCross(positions[b], profile[b], positions[b + 1], profile[b + 1], half)
      : positions[n - 1];
  const step = n > 1 ? Math.abs(positions[n - 1] - positions[0]) / (n - 1) : 1;
  const sigma = Math.max(Math.abs(xr - xl), step) / 2.3548200450309493;
  return { background, amplitude, centre, sigma };
}

function interpCross(x0: number, y0: number, x1: number, y1: number, level: number): number {
  return y1 === y0 ? 0.5 * (x0 + x1) : x0 + ((level - y0) / (y1 - y0)) * (x1 - x0);
}
