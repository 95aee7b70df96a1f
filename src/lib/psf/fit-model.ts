import { levenbergMarquardt } from "ml-levenberg-marquardt";
import { Matrix, inverse } from "ml-matrix";
import type { FitStopReason } from "./analysis-types";

/**
 * A least-squares model over indexed samples: `value(p, i)` is the model at sample i,
 * `gradient(p, i, out)` writes ∂model/∂p_k into out[k]. Sample coordinates live in the model.
 */
export interface IndexedModel {
  nParams: number;
  value(params: ArrayLike<number>, i: number): number;
  gradient(params: ArrayLike<number>, i: number, out: Float64Array): void;
}

/** Options of {@link fitModel}. */
export interface FitModelOptions {
  initialValues: number[];
  minValues?: number[];
  maxValues?: number[];
  /** LM iterations; ml-levenberg-marquardt runs all of them on noisy data. @default 30 */
  maxIterations?: number;
  /** Initial LM damping. @default 1e-2 */
  damping?: number;
  /** A Gauss–Newton step from the optimum smaller than this many standard errors counts as converged. @default 0.05 */
  stepTolerance?: number;
}

/** Result of {@link fitModel}. */
export interface FitModelResult {
  params: number[];
  /** One-sigma standard errors √diag(cov); NaN where the covariance is singular. */
  standardErrors: number[];
  /** cov = s²(JᵀJ)⁻¹ with s² = SSE/(n − p); null when singular or n ≤ p. */
  covariance: number[][] | null;
  sse: number;
  /** 1 − SSE/SST (SST about the data mean). */
  r2: number;
  n: number;
  iterations: number;
  converged: boolean;
  reason: FitStopReason;
}

/**
 * Levenberg–Marquardt fit (ml-levenberg-marquardt, analytic Jacobian) plus the parameter
 * covariance from the Jacobian at the optimum, R², and an honest convergence flag.
 *
 * @param y - data, one value per sample index (counts)
 * @param model - the model, evaluated by sample index
 * @param options - initial values, bounds, iterations
 * @returns parameters, standard errors, covariance, SSE, R², iterations, converged, reason
 *
 * Notes: ml-levenberg-marquardt stops only on an absolute error tolerance, so with noise
 * it always runs `maxIterations`. Convergence is therefore judged afterwards: J is computed
 * at the optimum, the Gauss–Newton step δ = (JᵀJ)⁻¹Jᵀr is formed, and the fit counts as
 * converged when every |δ_k| < max(stepTolerance·SE_k, 1e-7·|p_k|) (the second term serves noise-free data).
 * cov = s²(JᵀJ)⁻¹, s² = SSE/(n − p) (unweighted least squares).
 * References: Press et al., Numerical Recipes 3rd ed. §15.5 (from memory); TOOLCHAIN.md §6.16.
 * @example
 * fitModel(y, gaussian1dModel(t), { initialValues: [100, 1000, 7, 2] });
 */
export function fitModel(
  y: ArrayLike<number>,
  model: IndexedModel,
  options: FitModelOptions,
): FitModelResult {
  const {
    initialValues,
    minValues,
    maxValues,
    maxIterations = 30,
    damping = 1e-2,
    stepTolerance = 0.05,
  } = options;
  const n = y.length;
  const p = model.nParams;
  const nanResult = (reason: FitStopReason, params: number[]): FitModelResult => ({
    params,
    standardErrors: new Array(p).fill(Number.NaN),
    covariance: null,
    sse: Number.NaN,
    r2: Number.NaN,
    n,
    iterations: 0,
    converged: false,
    reason,
  });
  if (n <= p) return nanResult("too_few_points", initialValues.slice());
  const xs = new Float64Array(n);
  for (let i = 0; i < n; i++) xs[i] = i;
  const grad = new Float64Array(p);
  // The library reads the partials immediately, so one reused buffer is safe.
  const gradView = grad as unknown as number[];
  let lm;
  try {
    lm = levenbergMarquardt({ x: xs, y }, (params: number[]) => (i: number) => model.value(params, i), {
      initialValues,
      minValues,
      maxValues,
      maxIterations,
      damping,
      errorTolerance: 1e-10,
      jacobianFunction: (params: number[]) => (i: number) => {
        model.gradient(params, i, grad);
        return gradView;
      },
    });
  } catch {
    return nanResult("non_finite", initialValues.slice());
  }
  const params = lm.parameterValues;
  if (!params.every(Number.isFinite))
    return { ...nanResult("non_finite", params), iterations: lm.iterations };

  // Jacobian at the optimum → JᵀJ, Jᵀr, SSE, SST.
  const jtj = new Float64Array(p * p);
  const jtr = new Float64Array(p);
  let sse = 0;
  let mean = 0;
  for (let i = 0; i < n; i++) mean += y[i];
  mean /= n;
  let sst = 0;
  for (let i = 0; i < n; i++) {
    const r = y[i] - model.value(params, i);
    sse += r * r;
    sst += (y[i] - mean) * (y[i] - mean);
    model.gradient(params, i, grad);
    for (let a = 0; a < p; a++) {
      jtr[a] += grad[a] * r;
      for (let b = a; b < p; b++) jtj[a * p + b] += grad[a] * grad[b];
    }
  }
  const r2 = sst > 0 ? 1 - sse / sst : sse === 0 ? 1 : Number.NaN;
  const rows: number[][] = [];
  for (let a = 0; a < p; a++) {
    const row: number[] = [];
    for (let b = 0; b < p; b++) row.push(a <= b ? jtj[a * p + b] : jtj[b * p + a]);
    rows.push(row);
  }
  let inv: number[][] | null;
  try {
    const m = inverse(new Matrix(rows));
    inv = m.to2DArray();
    if (!inv.every((r) => r.every(Number.isFinite))) inv = null;
  } catch {
    inv = null;
  }
  const s2 = sse / (n - p);
  if (!inv) {
    return {
      params,
      standardErrors: new Array(p).fill(Number.NaN),
      covariance: null,
      sse,
      r2,
      n,
      iterations: lm.iterations,
      converged: false,
      reason: "singular",
    };
  }
  const covariance = inv.map((r) => r.map((v) => v * s2));
  const standardErrors = covariance.map((r, k) => Math.sqrt(Math.max(0, r[k])));
  let converged = true;
  for (let a = 0; a < p; a++) {
    let delta = 0;
    for (let b = 0; b < p; b++) delta += inv[a][b] * jtr[b];
    // A parameter pinned at a bound cannot take the step; judge the others.
    const atBound =
      (minValues && params[a] <= minValues[a] && delta < 0) ||
      (maxValues && params[a] >= maxValues[a] && delta > 0);
    if (atBound) continue;
    const scale = Math.max(stepTolerance * standardErrors[a], 1e-7 * Math.abs(params[a]), 1e-12);
    if (!(Math.abs(delta) <= scale)) converged = false;
  }
  return {
    params,
    standardErrors,
    covariance,
    sse,
    r2,
    n,
    iterations: lm.iterations,
    converged,
    reason: converged ? "converged" : "max_iterations",
  };
}
