/**
 * Control limits for sparse, monthly QC points: an individuals / moving-range
 * chart of the per-session median ratio, an EWMA for slow drift, self-starting
 * limits while a baseline epoch has few points, and run rules adapted to a
 * monthly cadence. Alarms are one-sided on "worse" (a larger ratio); a point that
 * is suspiciously "better" becomes a metadata-check prompt instead.
 *
 * References: individuals chart σ̂ = MR̄/d₂ with d₂ = 1.128 for n = 2 and limits
 * x̄ ± 2.66·MR̄ (NIST/SEMATECH e-Handbook of Statistical Methods §6.3.2.2; control
 * chart constants tables); EWMA zᵢ = λxᵢ + (1−λ)zᵢ₋₁ with limits
 * x̄ ± L·σ̂·√(λ/(2−λ)·[1−(1−λ)^{2i}]) (NIST/SEMATECH §6.3.2.4; λ = 0.2, L = 3 common
 * defaults); run rules 1₃s, 2₂s, 4₁s and 1₂s-as-warning (Westgard multirules,
 * QC-PRACTICE.md §3.3).
 */

/** d₂ for subgroups of 2 (moving ranges of consecutive points). */
export const D2_N2 = 1.128;

export interface ControlPoint {
  /** Any label the caller needs back (e.g. a measurement id). */
  id: string;
  value: number;
}

export interface ControlChartOptions {
  /** EWMA weight. @default 0.2 */
  lambda?: number;
  /** EWMA limit width in σ. @default 3 */
  ewmaL?: number;
  /** Points needed before limits are computed at all. @default 3 */
  minPoints?: number;
  /** Below this many baseline points the limits are marked provisional (self-starting). @default 20 */
  settledPoints?: number;
  /** How many of the epoch's first points define the centre line and σ. @default all points */
  baselineCount?: number;
}

export type RuleId = "1-3s" | "2-2s" | "4-1s" | "1-2s" | "ewma" | "better";

export interface RuleHit {
  rule: RuleId;
  level: "alarm" | "warning" | "metadata-check";
  /** Index of the point that completes the rule. */
  index: number;
  message: string;
}

export interface ControlChart {
  n: number;
  centre: number | null;
  sigma: number | null;
  averageMovingRange: number | null;
  /** Individuals-chart limits, centre ± 3σ̂ (= ± 2.66·MR̄). */
  upper3: number | null;
  lower3: number | null;
  upper2: number | null;
  upper1: number | null;
  /** True while the limits rest on fewer than `settledPoints` points. */
  provisional: boolean;
  ewma: Array<{ value: number; upper: number; lower: number }>;
  hits: RuleHit[];
}

function mean(xs: number[]): number {
  return xs.reduce((a, b) => a + b, 0) / xs.length;
}

/**
 * Individuals / moving-range and EWMA chart of one series, with the run rules.
 *
 * @param points - per-session values in time order (e.g. median measured/theory ratio)
 * @returns limits, the EWMA path and every rule hit (latest points last)
 * @throws RangeError for λ outside (0, 1] or a non-finite value
 * @example computeControlChart([{ id: "a", value: 1.1 }, { id: "b", value: 1.12 }, { id: "c", value: 1.09 }])
 */
export function computeControlChart(points: ControlPoint[], options: ControlChartOptions = {}): ControlChart {
  const { lambda = 0.2, ewmaL = 3, minPoints = 3, settledPoints = 20, baselineCount } = options;
  if (!(lambda > 0 && lambda <= 1)) throw new RangeError(`lambda must be in (0, 1], got ${lambda}`);
  points.forEach((p, i) => {
    if (!Number.isFinite(p.value)) throw new RangeError(`points[${i}].value must be finite, got ${p.value}`);
  });
  const xs = points.map((p) => p.value);
  const base = xs.slice(0, Math.max(minPoints, Math.min(baselineCount ?? xs.length, xs.length)));
  const empty: ControlChart = {
    n: xs.length,
    centre: null,
    sigma: null,
    averageMovingRange: null,
    upper3: null,
    lower3: null,
    upper2: null,
    upper1: null,
    provisional: true,
    ewma: [],
    hits: [],
  };
  if (base.length < minPoints) return empty;
  const centre = mean(base);
  const ranges = base.slice(1).map((x, i) => Math.abs(x - base[i]!));
  const averageMovingRange = mean(ranges);
  const sigma = averageMovingRange / D2_N2;
  const chart: ControlChart = {
    n: xs.length,
    centre,
    sigma,
    averageMovingRange,
    upper3: centre + 3 * sigma,
    lower3: centre - 3 * sigma,
    upper2: centre + 2 * sigma,
    upper1: centre + sigma,
    provisional: base.length < settledPoints,
    ewma: [],
    hits: [],
  };
  if (!(sigma > 0)) return chart; // identical points: no spread to judge against

  let z = centre;
  xs.forEach((x, i) => {
    z = lambda * x + (1 - lambda) * z;
    const w = ewmaL * sigma * Math.sqrt((lambda / (2 - lambda)) * (1 - (1 - lambda) ** (2 * (i + 1))));
    chart.ewma.push({ value: z, upper: centre + w, lower: centre - w });
  });

  const k = xs.map((x) => (x - centre) / sigma);
  for (let i = 0; i < xs.length; i++) {
    const hit = (rule: RuleId, level: RuleHit["level"], message: string) =>
      chart.hits.push({ rule, level, index: i, message });
    if (k[i]! > 3) hit("1-3s", "alarm", "one point more than 3σ above the baseline");
    else if (i >= 1 && k[i]! > 2 && k[i - 1]! > 2)
      hit("2-2s", "alarm", "two consecutive points more than 2σ above the baseline");
    else if (i >= 3 && [0, 1, 2, 3].every((j) => k[i - j]! > 1))
      hit("4-1s", "alarm", "four consecutive points more than 1σ above the baseline");
    else if (chart.ewma[i]!.value > chart.ewma[i]!.upper)
      hit("ewma", "alarm", "the EWMA has drifted above its upper limit");
    else if (k[i]! > 2) hit("1-2s", "warning", "one point more than 2σ above the baseline");
    if (k[i]! < -3)
      hit(
        "better",
        "metadata-check",
        "a point more than 3σ better than the baseline: check the recorded metadata",
      );
  }
  return chart;
}

export interface TheilSenResult {
  n: number;
  slope: number | null;
  intercept: number | null;
  /** Approximate 95 % interval of the slope from the ranks of the pairwise slopes (Sen 1968). */
  slopeLow: number | null;
  slopeHigh: number | null;
}

/**
 * Theil–Sen robust slope of y against x with Sen's rank-based 95 % interval.
 *
 * References: Sen, J Am Stat Assoc 63:1379 (1968); Theil (1950). The interval uses
 * the normal approximation to Kendall's S variance n(n−1)(2n+5)/18 (no ties).
 */
export function theilSenSlope(x: number[], y: number[]): TheilSenResult {
  if (x.length !== y.length)
    throw new RangeError(`x and y must have the same length (${x.length} vs ${y.length})`);
  const n = x.length;
  // n(n−1)/2 pairwise slopes: a typed array and order statistics by selection (O(N) each)
  // instead of a full sort, so a year of daily checks (~10⁵ slopes) costs milliseconds.
  const slopes = new Float64Array((n * (n - 1)) / 2);
  let N = 0;
  for (let i = 0; i < n; i++)
    for (let j = i + 1; j < n; j++) if (x[j] !== x[i]) slopes[N++] = (y[j]! - y[i]!) / (x[j]! - x[i]!);
  if (N === 0) return { n, slope: null, intercept: null, slopeLow: null, slopeHigh: null };
  const s = slopes.subarray(0, N);
  const slope = N % 2 ? selectKth(s, N >> 1) : (selectKth(s, N / 2 - 1) + selectKth(s, N / 2)) / 2;
  const residuals = Float64Array.from(x, (xi, i) => y[i]! - slope * xi);
  const m = residuals.length;
  const intercept =
    m % 2
      ? selectKth(residuals, m >> 1)
      : (selectKth(residuals, m / 2 - 1) + selectKth(residuals, m / 2)) / 2;
  const c = 1.959964 * Math.sqrt((n * (n - 1) * (2 * n + 5)) / 18);
  const lo = Math.floor((N - c) / 2);
  const hi = Math.ceil((N + c) / 2);
  return {
    n,
    slope,
    intercept,
    slopeLow: lo >= 0 && lo < N ? selectKth(s, lo) : null,
    slopeHigh: hi >= 1 && hi <= N ? selectKth(s, hi - 1) : null,
  };
}

/** The k-th smallest (0-based) value of `a`, which is partly reordered in place (Hoare's quickselect). */
function selectKth(a: Float64Array, k: number): number {
  let lo = 0;
  let hi = a.length - 1;
  while (hi > lo) {
    const pivot = a[(lo + hi) >> 1]!;
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (a[i]! < pivot) i++;
      while (a[j]! > pivot) j--;
      if (i <= j) {
        const t = a[i]!;
        a[i] = a[j]!;
        a[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else break;
  }
  return a[k]!;
}
