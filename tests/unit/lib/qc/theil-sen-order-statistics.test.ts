/**
 * theilSenSlope picks its median and interval ranks by selection, not by sorting all n(n−1)/2
 * pairwise slopes (a year of daily checks is ~10⁵ slopes). It must return exactly what the
 * definition gives: the sorted pairwise slopes' median and ranks.
 */
import { describe, expect, it } from "vitest";
import { theilSenSlope } from "@/lib/qc/control-chart";

/** The definition, by full sort. Source: Sen, J Am Stat Assoc 63:1379 (1968). */
function bySorting(x: number[], y: number[]) {
  const slopes: number[] = [];
  for (let i = 0; i < x.length; i++)
    for (let j = i + 1; j < x.length; j++) if (x[j] !== x[i]) slopes.push((y[j]! - y[i]!) / (x[j]! - x[i]!));
  if (slopes.length === 0) return { slope: null, intercept: null, slopeLow: null, slopeHigh: null };
  const median = (v: number[]) => {
    const s = [...v].sort((a, b) => a - b);
    return s.length % 2 ? s[s.length >> 1]! : (s[s.length / 2 - 1]! + s[s.length / 2]!) / 2;
  };
  const sorted = [...slopes].sort((a, b) => a - b);
  const slope = median(slopes);
  const n = x.length;
  const N = slopes.length;
  const c = 1.959964 * Math.sqrt((n * (n - 1) * (2 * n + 5)) / 18);
  const lo = Math.floor((N - c) / 2);
  const hi = Math.ceil((N + c) / 2);
  return {
    slope,
    intercept: median(x.map((xi, i) => y[i]! - slope * xi)),
    slopeLow: lo >= 0 && lo < N ? sorted[lo]! : null,
    slopeHigh: hi >= 1 && hi <= N ? sorted[hi - 1]! : null,
  };
}

/** −0 and +0 are the same slope (0/−1 vs 0/1); which one a sort keeps first is arbitrary. */
const zeroes = <T extends Record<string, number | null | undefined>>(r: T) =>
  Object.fromEntries(Object.entries(r).map(([k, v]) => [k, v === 0 ? 0 : v]));

/** Deterministic invented data (a small LCG), with repeated x and y values to make ties. */
function lcg(seed: number) {
  let s = seed >>> 0;
  return () => (s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32;
}

describe("theilSenSlope order statistics", () => {
  it("match a full sort on 500 random series with ties, odd and even counts", () => {
    const rand = lcg(20240607);
    for (let t = 0; t < 500; t++) {
      const n = Math.floor(rand() * 45);
      const x = Array.from({ length: n }, () => Math.floor(rand() * 12));
      const y = x.map(() => (rand() < 0.3 ? 1.1 : Math.round(rand() * 40) / 20));
      const got = theilSenSlope(x, y);
      expect(zeroes({ ...got, n: undefined })).toEqual(zeroes({ ...bySorting(x, y), n: undefined }));
      expect(got.n).toBe(n);
    }
  });

  it("match a full sort on a year of daily checks", () => {
    const rand = lcg(7);
    const x = Array.from({ length: 365 }, (_, i) => i / 30);
    const y = x.map((v) => 1.1 + 0.004 * v + 0.03 * (rand() - 0.5));
    expect(theilSenSlope(x, y)).toEqual({ n: 365, ...bySorting(x, y) });
  });
});
