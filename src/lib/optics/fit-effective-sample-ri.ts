import { axialScalingFactors } from "./axial-scaling-factors";
import { gibsonLanniDepthMetrics } from "./gibson-lanni-depth-metrics";
import { findGibsonLanniFocus } from "./find-gibson-lanni-focus";
import { createGibsonLanniModel } from "./gibson-lanni-model";
import type { GibsonLanniParams } from "./gibson-lanni-params";
import { createMonotoneInterpolator } from "./monotone-interpolator";
import { studentT975 } from "./student-t-quantile";

/** One measured depth-profile row (typically a depth bin or one bead). */
export interface DepthProfileRow {
  /** Depth below the coverslip, µm: nominal focus travel or actual depth (see `depthKind`). */
  depthUm: number;
  /** Measured axial FWHM in stack (nominal focus) units, µm. */
  axialFwhmUm: number;
  /** Standard error of axialFwhmUm, µm (weights the fit when given for every row). */
  axialFwhmSeUm?: number;
  /** Axial side-lobe asymmetry (far − near)/peak; > 0 means lobes away from the coverslip (METHODS §8). */
  asymmetry?: number;
  /** Measured lateral FWHM, µm (reported against the fitted model as extra evidence). */
  lateralFwhmUm?: number;
}

/** Optical set-up of the fit: everything of the GL model except the sample RI. */
export type FitOptics = Omit<GibsonLanniParams, "sampleRi">;

/** Options of {@link fitEffectiveSampleRi}. */
export interface FitEffectiveSampleRiOptions {
  /** Lower search bound for n_s. @default 1.30 */
  minRi?: number;
  /** Upper search bound for n_s. @default 1.60 */
  maxRi?: number;
  /** Coarse grid points before refinement. @default 13 */
  gridCount?: number;
  /** Golden-section stop width in n_s. @default 2e-4 */
  toleranceRi?: number;
  /** Golden-section iteration cap. @default 40 */
  maxIterations?: number;
  /** GL depths sampled per candidate n_s when there are more distinct row depths than exactRowLimit. @default 9 */
  curveSampleCount?: number;
  /** Up to this many distinct row depths, the model is evaluated at each row depth exactly. @default 16 */
  exactRowLimit?: number;
}

/** Prediction at the fitted RI for one row. */
export interface FittedRow {
  depthUm: number;
  actualDepthUm: number;
  measuredAxialFwhmUm: number;
  predictedAxialFwhmUm: number;
  residualUm: number;
  measuredLateralFwhmUm: number | null;
  predictedLateralFwhmUm: number | null;
}

/** Result of {@link fitEffectiveSampleRi}. */
export interface EffectiveSampleRiFit {
  /** Best-fit sample RI. */
  sampleRi: number;
  /** 95 % profile-likelihood interval [low, high] (NaN when it cannot be estimated). */
  interval95: [number, number];
  /** True when an interval end hit the search bound. */
  intervalClipped: boolean;
  /** Weighted sum of squared residuals at the optimum (µm², or dimensionless χ² when weighted by SE). */
  sse: number;
  /** Residual standard deviation s = √(SSE/(N − 1)) (µm, or reduced-χ² root when weighted). */
  residualSd: number;
  /** Whether per-row SEs were used as weights. */
  weighted: boolean;
  /** A separate minimum on the other side of the immersion RI that fits nearly as well (SSE within 4Δ), else null. */
  alternativeRi: number | null;
  /** How the side of the immersion RI was chosen (asymmetry evidence or SSE alone). */
  sideChosenBy: "sse" | "asymmetry";
  /** Sign agreement of the measured mean asymmetry with the model at the fit (null without data). */
  asymmetryAgrees: boolean | null;
  rows: FittedRow[];
  iterations: number;
  converged: boolean;
  reason: string;
}

function checkRows(rows: DepthProfileRow[]): void {
  if (rows.length === 0) throw new RangeError("fitEffectiveSampleRi: rows must not be empty");
  rows.forEach((r, i) => {
    if (!Number.isFinite(r.depthUm) || r.depthUm < 0)
      throw new RangeError(
        `fitEffectiveSampleRi: rows[${i}].depthUm must be finite and ≥ 0, got ${r.depthUm}`,
      );
    if (!(r.axialFwhmUm > 0))
      throw new RangeError(`fitEffectiveSampleRi: rows[${i}].axialFwhmUm must be > 0, got ${r.axialFwhmUm}`);
    if (r.axialFwhmSeUm !== undefined && !(r.axialFwhmSeUm > 0)) {
      throw new RangeError(
        `fitEffectiveSampleRi: rows[${i}].axialFwhmSeUm must be > 0, got ${r.axialFwhmSeUm}`,
      );
    }
  });
}

interface Curve {
  /** axial FWHM at a row depth (in the rows' depth kind). */
  axialAt: (depthUm: number) => number;
  /** actual depth for a row depth. */
  actualAt: (depthUm: number) => number;
  /** lateral FWHM at a row depth (NaN when not computed). */
  lateralAt: (depthUm: number) => number;
  /** mean side-lobe asymmetry over the rows' depth range. */
  asymmetryAt: (depthUm: number) => number;
}

/**
 * Predictions for one candidate n_s at the row depths (internal).
 *
 * With at most `exactRowLimit` distinct depths the GL metrics are evaluated at each row's own
 * actual depth (nominal depths are first converted through a 5-point focal-shift curve of this
 * n_s, which is smooth, so the conversion error is ~10⁻² µm). With more rows the metrics are
 * sampled at `count` depths covering the rows and interpolated (monotone cubic).
 */
function predictCurve(
  optics: FitOptics,
  sampleRi: number,
  depthKind: "nominal" | "actual",
  rowDepthsUm: number[],
  count: number,
  exactRowLimit: number,
  full: boolean,
): Curve {
  const model = createGibsonLanniModel({ ...optics, sampleRi });
  let lo = Math.min(...rowDepthsUm);
  let hi = Math.max(...rowDepthsUm);
  if (depthKind === "nominal") {
    // Bracket the actual depths with the depth-independent factors (GL ζ lies between them).
    const f = axialScalingFactors({ na: optics.na, immersionRi: optics.immersionRi, sampleRi });
    const zs = [f.paraxial.factor, f.rmsOptimal.factor];
    lo = Math.max(0, lo * Math.min(...zs) - 1);
    hi = hi * Math.max(...zs) + 1;
  }
  if (hi - lo < 1e-6) hi = lo + 1;
  const unique = [...new Set(rowDepthsUm)].sort((a, b) => a - b);
  const options = { lateral: full, sideLobes: full };

  if (unique.length <= exactRowLimit) {
    let toActual = (d: number) => d;
    if (depthKind === "nominal") {
      const actual: number[] = [];
      const nominal: number[] = [];
      for (let k = 0; k < 5; k++) {
        const d = lo + ((hi - lo) * k) / 4;
        const focus = findGibsonLanniFocus(model, d);
        if (nominal.length > 0 && focus.nominalFocusUm <= nominal[nominal.length - 1]) continue;
        actual.push(d);
        nominal.push(focus.nominalFocusUm);
      }
      const interpolate = createMonotoneInterpolator(nominal, actual);
      toActual = (d: number) => Math.max(0, interpolate(d));
    }
    const byDepth = new Map<number, { actual: number; m: ReturnType<typeof gibsonLanniDepthMetrics> }>();
    for (const d of unique) {
      const actual = toActual(d);
      byDepth.set(d, { actual, m: gibsonLanniDepthMetrics(model, actual, options) });
    }
    const get = (d: number) => {
      const hit = byDepth.get(d);
      if (hit) return hit;
      const actual = toActual(d);
      return { actual, m: gibsonLanniDepthMetrics(model, actual, options) };
    };
    return {
      axialAt: (d) => get(d).m.axialFwhmUm,
      actualAt: (d) => get(d).actual,
      lateralAt: (d) => get(d).m.lateralFwhmUm,
      asymmetryAt: (d) => get(d).m.sideLobeAsymmetry,
    };
  }

  const actual: number[] = [];
  const nominal: number[] = [];
  const axial: number[] = [];
  const lateral: number[] = [];
  const asym: number[] = [];
  for (let k = 0; k < count; k++) {
    const d = lo + ((hi - lo) * k) / (count - 1);
    const m = gibsonLanniDepthMetrics(model, d, options);
    if (nominal.length > 0 && m.nominalFocusUm <= nominal[nominal.length - 1]) continue;
    actual.push(d);
    nominal.push(m.nominalFocusUm);
    axial.push(m.axialFwhmUm);
    lateral.push(m.lateralFwhmUm);
    asym.push(m.sideLobeAsymmetry);
  }
  const xs = depthKind === "nominal" ? nominal : actual;
  const axialI = createMonotoneInterpolator(xs, axial);
  const actualI = createMonotoneInterpolator(xs, actual);
  const lateralI = full ? createMonotoneInterpolator(xs, lateral) : () => Number.NaN;
  const asymI = full ? createMonotoneInterpolator(xs, asym) : () => Number.NaN;
  return { axialAt: axialI, actualAt: actualI, lateralAt: lateralI, asymmetryAt: asymI };
}

const GOLDEN = (Math.sqrt(5) - 1) / 2;

/**
 * Fit the effective sample RI that best explains a measured axial-FWHM depth profile with the
 * Gibson–Lanni model (the "index fit").
 *
 * Notes:
 * - objective: weighted SSE Σ wᵢ(FWHM_pred(n_s, dᵢ) − FWHM_meas,ᵢ)², wᵢ = 1/SEᵢ² when every row
 *   has an SE, else 1. Predictions are in stack (nominal) units. With nominal depths, each
 *   candidate n_s converts depth through its own GL focal-shift curve, so depth is never
 *   converted with a wrong RI. Up to `exactRowLimit` distinct depths the model is evaluated at
 *   each row depth; beyond that a `curveSampleCount`-point curve is interpolated;
 * - search: coarse grid over [minRi, maxRi], then golden section around the best grid point;
 * - axial broadening grows for either sign of n_s − n_i, so two minima can exist. When the rows
 *   carry an asymmetry, the side whose predicted asymmetry sign matches the mean measured sign is
 *   chosen (METHODS §8); otherwise the lower SSE wins and the other minimum is reported as
 *   `alternativeRi`;
 * - 95 % interval by profile likelihood: {n_s : SSE(n_s) ≤ SSE_min + Δ}, with
 *   Δ = s²·F(1, N−1) = s²·t₀.₉₇₅(N−1)² and s² = SSE_min/(N−1) when unweighted, or
 *   Δ = 3.841·max(1, SSE_min/(N−1)) (χ²₁, inflated by the reduced χ²) when weighted by SEs.
 *   With one unweighted row the interval is NaN.
 *
 * References: Gibson & Lanni, JOSA A 8:1601 (1991); Kirshner, Aguet, Sage & Unser, J Microsc
 * (2013) (GL fitting to beads, title only); Bates & Watts, Nonlinear Regression Analysis (1988),
 * §6.1 (profile-likelihood intervals, from memory); METHODS.md §4.4, §8.
 *
 * @param rows - measured profile (depth in µm of `depthKind`, widths in µm)
 * @param setup - optics without the sample RI, and whether depths are nominal or actual
 * @param options - search range, grid, tolerance, iteration cap
 * @returns the fitted RI with interval, diagnostics and per-row predictions
 * @throws RangeError for empty rows or invalid values
 * @example fitEffectiveSampleRi(rows, { optics: { na: 1.4, wavelengthNm: 520, immersionRi: 1.518 }, depthKind: "nominal" })
 */
export function fitEffectiveSampleRi(
  rows: DepthProfileRow[],
  setup: { optics: FitOptics; depthKind: "nominal" | "actual" },
  options: FitEffectiveSampleRiOptions = {},
): EffectiveSampleRiFit {
  const {
    minRi = 1.3,
    maxRi = 1.6,
    gridCount = 13,
    toleranceRi = 2e-4,
    maxIterations = 40,
    curveSampleCount = 9,
    exactRowLimit = 16,
  } = options;
  checkRows(rows);
  if (!(minRi >= 1 && maxRi > minRi))
    throw new RangeError(`fitEffectiveSampleRi: need 1 ≤ minRi < maxRi, got ${minRi}, ${maxRi}`);
  if (!Number.isInteger(gridCount) || gridCount < 3)
    throw new RangeError(`fitEffectiveSampleRi: gridCount must be an integer ≥ 3, got ${gridCount}`);
  const { optics, depthKind } = setup;
  createGibsonLanniModel({ ...optics, sampleRi: (minRi + maxRi) / 2 }); // validates the optics early
  const depths = rows.map((r) => r.depthUm);
  const weighted = rows.every((r) => r.axialFwhmSeUm !== undefined);
  const weights = rows.map((r) => (weighted ? 1 / (r.axialFwhmSeUm as number) ** 2 : 1));
  const n = rows.length;

  const cache = new Map<number, number>();
  let evaluations = 0;
  const sse = (ri: number): number => {
    const cached = cache.get(ri);
    if (cached !== undefined) return cached;
    evaluations++;
    const curve = predictCurve(optics, ri, depthKind, depths, curveSampleCount, exactRowLimit, false);
    let s = 0;
    for (let i = 0; i < n; i++) {
      const r = curve.axialAt(rows[i].depthUm) - rows[i].axialFwhmUm;
      s += weights[i] * r * r;
    }
    if (!Number.isFinite(s)) s = Number.POSITIVE_INFINITY;
    cache.set(ri, s);
    return s;
  };

  // Coarse grid; the immersion RI is added so the two sides of the mismatch are bracketed separately.
  const gridSet = new Set<number>();
  for (let i = 0; i < gridCount; i++) gridSet.add(minRi + ((maxRi - minRi) * i) / (gridCount - 1));
  if (optics.immersionRi > minRi && optics.immersionRi < maxRi) gridSet.add(optics.immersionRi);
  const grid = [...gridSet].sort((a, b) => a - b);
  const values = grid.map(sse);

  // Local minima of the grid, refined by golden section.
  let iterations = 0;
  let converged = true;
  const minima: Array<{ ri: number; value: number }> = [];
  for (let i = 0; i < grid.length; i++) {
    const left = i === 0 ? Number.POSITIVE_INFINITY : values[i - 1];
    const right = i === grid.length - 1 ? Number.POSITIVE_INFINITY : values[i + 1];
    if (!(values[i] <= left && values[i] <= right)) continue;
    let a = grid[Math.max(0, i - 1)];
    let b = grid[Math.min(grid.length - 1, i + 1)];
    let c = b - GOLDEN * (b - a);
    let d = a + GOLDEN * (b - a);
    let fc = sse(c);
    let fd = sse(d);
    let it = 0;
    while (b - a > toleranceRi && it < maxIterations) {
      it++;
      if (fc < fd) {
        b = d;
        d = c;
        fd = fc;
        c = b - GOLDEN * (b - a);
        fc = sse(c);
      } else {
        a = c;
        c = d;
        fc = fd;
        d = a + GOLDEN * (b - a);
        fd = sse(d);
      }
    }
    iterations += it;
    converged &&= b - a <= toleranceRi;
    const x = (a + b) / 2;
    const fx = sse(x);
    minima.push(fx <= values[i] ? { ri: x, value: fx } : { ri: grid[i], value: values[i] });
  }
  minima.sort((p, q) => p.value - q.value);

  // Side selection with the asymmetry evidence (METHODS §8: far lobes ⇔ n_s < n_i).
  const asymRows = rows.filter((r) => r.asymmetry !== undefined && Number.isFinite(r.asymmetry));
  const meanAsym =
    asymRows.length > 0
      ? asymRows.reduce((s, r) => s + (r.asymmetry as number), 0) / asymRows.length
      : Number.NaN;
  const belowImmersion = (ri: number) => ri < optics.immersionRi;
  let best = minima[0];
  let sideChosenBy: "sse" | "asymmetry" = "sse";
  const other = minima.find(
    (m) => belowImmersion(m.ri) !== belowImmersion(best.ri) && Math.abs(m.ri - best.ri) > 0.01,
  );
  if (other && Number.isFinite(meanAsym) && Math.abs(meanAsym) > 0.02) {
    const wantBelow = meanAsym > 0;
    if (belowImmersion(best.ri) !== wantBelow && belowImmersion(other.ri) === wantBelow) {
      best = other;
    }
    sideChosenBy = "asymmetry";
  }
  // Profile-likelihood threshold.
  let delta = Number.NaN;
  if (weighted) delta = 3.841 * Math.max(1, n > 1 ? best.value / (n - 1) : 1);
  else if (n > 1) delta = (best.value / (n - 1)) * studentT975(n - 1) ** 2;

  const atBound = (ri: number) => ri - minRi < 2 * toleranceRi || maxRi - ri < 2 * toleranceRi;
  // An alternative is a separate minimum on the other side of n_i that fits nearly as well
  // (SSE within 4Δ, or within a factor 2 when Δ is unknown). A "minimum" pinned at the search
  // bound is only the edge of a descending slope and is not reported.
  const plausible = (value: number) =>
    Number.isFinite(delta) ? value <= best.value + 4 * delta : value <= 2 * best.value + 1e-12;
  const alternative = minima.find(
    (m) =>
      m !== best &&
      !atBound(m.ri) &&
      plausible(m.value) &&
      belowImmersion(m.ri) !== belowImmersion(best.ri) &&
      Math.abs(m.ri - best.ri) > 0.01,
  );

  const threshold = best.value + delta;
  let intervalClipped = false;
  const bound = (direction: 1 | -1): number => {
    if (!Number.isFinite(threshold)) return Number.NaN;
    const limit = direction > 0 ? maxRi : minRi;
    // Walk the grid outward to the first point above the threshold, then bisect.
    let inside = best.ri;
    let outside = Number.NaN;
    const stepRi = (maxRi - minRi) / (gridCount - 1) / 4;
    for (
      let x = best.ri + direction * stepRi;
      direction > 0 ? x <= limit : x >= limit;
      x += direction * stepRi
    ) {
      if (sse(x) > threshold) {
        outside = x;
        break;
      }
      inside = x;
    }
    if (Number.isNaN(outside)) {
      intervalClipped = true;
      return limit;
    }
    for (let i = 0; i < 30 && Math.abs(outside - inside) > toleranceRi / 2; i++) {
      const mid = (inside + outside) / 2;
      if (sse(mid) > threshold) outside = mid;
      else inside = mid;
    }
    return (inside + outside) / 2;
  };
  const interval95: [number, number] = [bound(-1), bound(1)];

  const curve = predictCurve(optics, best.ri, depthKind, depths, curveSampleCount, exactRowLimit, true);
  const fittedRows: FittedRow[] = rows.map((r) => {
    const predicted = curve.axialAt(r.depthUm);
    const lateral = curve.lateralAt(r.depthUm);
    return {
      depthUm: r.depthUm,
      actualDepthUm: depthKind === "nominal" ? Math.max(0, curve.actualAt(r.depthUm)) : r.depthUm,
      measuredAxialFwhmUm: r.axialFwhmUm,
      predictedAxialFwhmUm: predicted,
      residualUm: r.axialFwhmUm - predicted,
      measuredLateralFwhmUm: r.lateralFwhmUm ?? null,
      predictedLateralFwhmUm: Number.isFinite(lateral) ? lateral : null,
    };
  });
  let asymmetryAgrees: boolean | null = null;
  if (Number.isFinite(meanAsym)) {
    const predicted = asymRows.reduce((s, r) => s + curve.asymmetryAt(r.depthUm), 0) / asymRows.length;
    asymmetryAgrees = Math.sign(predicted) === Math.sign(meanAsym);
  }
  return {
    sampleRi: best.ri,
    interval95,
    intervalClipped,
    sse: best.value,
    residualSd: n > 1 ? Math.sqrt(best.value / (n - 1)) : Number.NaN,
    weighted,
    alternativeRi: alternative ? alternative.ri : null,
    sideChosenBy,
    asymmetryAgrees,
    rows: fittedRows,
    iterations,
    converged,
    reason: atBound(best.ri)
      ? `best fit at the search bound (${best.ri.toFixed(3)}): the sample RI may lie outside [${minRi}, ${maxRi}]`
      : converged
        ? `converged after ${evaluations} model curves`
        : "maxIterations reached before the golden-section bracket met toleranceRi",
  };
}

/** Result of {@link judgeDeclaredRi}. */
export interface DeclaredRiVerdict {
  /** True when the declared RI lies inside the 95 % interval. */
  consistent: boolean;
  /** Plain-language verdict. */
  message: string;
}

/**
 * Plain verdict: is a declared sample RI consistent with the fitted effective RI?
 *
 * Notes: consistent ⇔ the declared value lies in the 95 % profile-likelihood interval. When the
 * interval could not be estimated the verdict falls back to |Δn| ≤ 0.01 and says so.
 *
 * References: METHODS.md §4.4 (signs in the data).
 *
 * @param fit - result of {@link fitEffectiveSampleRi}
 * @param declaredRi - RI the user declared for the sample
 * @returns consistent flag and message
 * @example judgeDeclaredRi(fit, 1.518).consistent
 */
export function judgeDeclaredRi(fit: EffectiveSampleRiFit, declaredRi: number): DeclaredRiVerdict {
  const [lo, hi] = fit.interval95;
  const fitted = fit.sampleRi.toFixed(3);
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) {
    const consistent = Math.abs(declaredRi - fit.sampleRi) <= 0.01;
    return {
      consistent,
      message: `Effective sample RI ${fitted} (no interval: too few rows). The declared ${declaredRi} is ${consistent ? "within" : "more than"} 0.01 of it.`,
    };
  }
  const consistent = declaredRi >= lo && declaredRi <= hi;
  const range = `${lo.toFixed(3)}–${hi.toFixed(3)}`;
  return {
    consistent,
    message: consistent
      ? `The depth profile is consistent with the declared RI ${declaredRi}: effective RI ${fitted} (95 % interval ${range}).`
      : `The depth profile is not consistent with the declared RI ${declaredRi}: effective RI ${fitted} (95 % interval ${range}). ` +
        (declaredRi > hi
          ? "The sample behaves as if its RI were lower than declared."
          : "The sample behaves as if its RI were higher than declared."),
  };
}
