/**
 * A figure with no universal limit, judged against the lens's own baseline: lateral
 * asymmetry (min/max lateral FWHM, lower is worse) and field planarity (higher is worse),
 * which QC-PRACTICE.md §2 lists as "baseline-relative". The band is the individuals chart's
 * centre ± 3σ̂ from the epoch's baseline block (see control-chart.ts); a point beyond the
 * band on the worse side is flagged. Advisory: it does not change the objective's status.
 */
import { computeControlChart, type ControlPoint } from "./control-chart";

export interface BaselineBand {
  /** Which direction is worse for this figure. */
  worse: "up" | "down";
  n: number;
  centre: number | null;
  /** centre − 3σ̂ and centre + 3σ̂ (null until the baseline block has 3 points). */
  lower3: number | null;
  upper3: number | null;
  /** True while the limits rest on fewer than 20 baseline points. */
  provisional: boolean;
  /** Ids of the points beyond 3σ̂ on the worse side. */
  beyond: string[];
}

/**
 * @param points - the current epoch's values in time order
 * @param worse - "up" when a larger value is worse, "down" when a smaller one is
 * @param baselineCount - how many of the first points set the centre and σ̂
 */
export function baselineBand(
  points: ControlPoint[],
  worse: "up" | "down",
  baselineCount: number,
): BaselineBand {
  // The control chart's alarms are one-sided upwards; mirror a "lower is worse" figure.
  const sign = worse === "up" ? 1 : -1;
  const chart = computeControlChart(
    points.map((p) => ({ id: p.id, value: sign * p.value })),
    { baselineCount },
  );
  const back = (v: number | null) => (v == null ? null : sign * v);
  const [a, b] = [back(chart.lower3), back(chart.upper3)];
  const beyond = new Set(chart.hits.filter((h) => h.rule === "1-3s").map((h) => points[h.index]!.id));
  return {
    worse,
    n: chart.n,
    centre: back(chart.centre),
    lower3: a == null || b == null ? null : Math.min(a, b),
    upper3: a == null || b == null ? null : Math.max(a, b),
    provisional: chart.provisional,
    beyond: [...beyond],
  };
}
