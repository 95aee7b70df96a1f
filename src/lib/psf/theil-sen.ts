import type { RobustTrend } from "./analysis-types";
import { median } from "./quantile";

/**
 * Theil–Sen robust line fit y = intercept + slope·x with Sen's rank-based confidence interval.
 *
 * @param x - abscissae (e.g. depth in µm)
 * @param y - ordinates (e.g. FWHM in µm); pairs with a non-finite member are ignored
 * @param confidence - two-sided level of the slope interval @default 0.95
 * @returns slope (y-unit per x-unit), intercept, interval; nulls when fewer than 2 distinct x
 *
 * Notes: slope = median of pairwise slopes (yj − yi)/(xj − xi) over xi ≠ xj; intercept =
 * median(y − slope·x). Interval: with N pairwise slopes sorted and C = z·√(n(n−1)(2n+5)/18),
 * the bounds are the slopes of rank ⌊(N − C)/2⌋ and ⌈(N + C)/2⌉ (ties in x ignored in the variance).
 * O(n²) — fine for a few thousand beads.
 * References: Sen, JASA 63:1379 (1968); Theil (1950) (from memory).
 * @example
 * theilSen([0, 1, 2, 3], [1, 3, 5, 7]).slope; // 2
 */
export function theilSen(x: ArrayLike<number>, y: ArrayLike<number>, confidence = 0.95): RobustTrend {
  if (x.length !== y.length)
    throw new RangeError(`theilSen: x and y lengths differ (${x.length} vs ${y.length})`);
  const xs: number[] = [];
  const ys: number[] = [];
  for (let i = 0; i < x.length; i++) {
    if (Number.isFinite(x[i]) && Number.isFinite(y[i])) {
      xs.push(x[i]);
      ys.push(y[i]);
    }
  }
  const n = xs.length;
  const empty: RobustTrend = { n, slope: null, intercept: null, slopeLow: null, slopeHigh: null, confidence };
  const slopes: number[] = [];
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const dx = xs[j] - xs[i];
      if (dx !== 0) slopes.push((ys[j] - ys[i]) / dx);
    }
  }
  if (slopes.length === 0) return empty;
  slopes.sort((a, b) => a - b);
  const N = slopes.length;
  const slope = N % 2 === 1 ? slopes[(N - 1) / 2] : 0.5 * (slopes[N / 2 - 1] + slopes[N / 2]);
  const resid = ys.map((v, i) => v - slope * xs[i]);
  const intercept = median(resid);
  const z = normalQuantile(0.5 + confidence / 2);
  const C = z * Math.sqrt((n * (n - 1) * (2 * n + 5)) / 18);
  const lo = Math.floor((N - C) / 2);
  const hi = Math.ceil((N + C) / 2);
  return {
    n,
    slope,
    intercept,
    slopeLow: lo >= 0 ? slopes[Math.min(N - 1, lo)] : slopes[0],
    slopeHigh: hi < N ? slopes[Math.max(0, hi)] : slopes[N - 1],
    confidence,
  };
}

/** Standard normal quantile (Acklam's rational approximation, |error| < 1.2e-9; from memory). */
export function normalQuantile(p: number): number {
  const a = [
    -3.969683028665376e1, 2.209460984245205e2, -2.759285104469687e2, 1.38357751867269e2, -3.066479806614716e1,
    2.506628277459239,
  ];
  const b = [
    -5.447609879822406e1, 1.615858368580409e2, -1.556989798598866e2, 6.680131188771972e1,
    -1.328068155288572e1,
  ];
  const c = [
    -7.784894002430293e-3, -3.223964580411365e-1, -2.400758277161838, -2.549732539343734, 4.374664141464968,
    2.938163982698783,
  ];
  const d = [7.784695709041462e-3, 3.224671290700398e-1, 2.445134137142996, 3.754408661907416];
  const pl = 0.02425;
  if (p <= 0) return -Infinity;
  if (p >= 1) return Infinity;
  if (p < pl) {
    const q = Math.sqrt(-2 * Math.log(p));
    return (
      (((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) /
      ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1)
    );
  }
  if (p > 1 - pl) return -normalQuantile(1 - p);
  const q = p - 0.5;
  const r = q * q;
  return (
    ((((((a[0] * r + a[1]) * r + a[2]) * r + a[3]) * r + a[4]) * r + a[5]) * q) /
    (((((b[0] * r + b[1]) * r + b[2]) * r + b[3]) * r + b[4]) * r + 1)
  );
}
