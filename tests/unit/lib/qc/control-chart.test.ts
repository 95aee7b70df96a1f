import { describe, expect, it } from "vitest";
import { linearRegression } from "simple-statistics";
import { computeControlChart, theilSenSlope, D2_N2 } from "@/lib/qc/control-chart";

const pts = (values: number[]) => values.map((value, i) => ({ id: String(i), value }));

describe("computeControlChart", () => {
  it("uses σ = MR̄/1.128 and limits x̄ ± 2.66·MR̄", () => {
    // Source: NIST/SEMATECH e-Handbook §6.3.2.2 (individuals chart; d2 = 1.128 for n = 2; 3/d2 = 2.66)
    const values = [1.1, 1.14, 1.08, 1.12, 1.1, 1.16];
    const c = computeControlChart(pts(values));
    const mr = [0.04, 0.06, 0.04, 0.02, 0.06];
    const mrBar = mr.reduce((a, b) => a + b) / mr.length;
    expect(c.averageMovingRange).toBeCloseTo(mrBar, 12);
    expect(c.sigma).toBeCloseTo(mrBar / 1.128, 12);
    expect(c.upper3! - c.centre!).toBeCloseTo(2.66 * mrBar, 3);
    expect(D2_N2).toBe(1.128);
    expect(c.provisional).toBe(true);
  });

  it("EWMA limits widen towards L·σ·√(λ/(2−λ))", () => {
    // Source: NIST/SEMATECH e-Handbook §6.3.2.4 (EWMA control limits), λ = 0.2, L = 3
    const values = Array.from({ length: 40 }, (_, i) => 1.1 + (i % 2 ? 0.02 : -0.02));
    const c = computeControlChart(pts(values));
    const first = c.ewma[0]!.upper - c.centre!;
    const last = c.ewma[39]!.upper - c.centre!;
    expect(first).toBeCloseTo(3 * c.sigma! * 0.2, 10); // i = 1: √(λ/(2−λ)·(1−(1−λ)²)) = λ
    expect(last).toBeCloseTo(3 * c.sigma! * Math.sqrt(0.2 / 1.8), 6);
  });

  it("fires 1-3s, 2-2s and 4-1s on worse points, and only a metadata check on better ones", () => {
    // Source: Westgard multirules as adapted in QC-PRACTICE.md §3.3 (one-sided on "worse": common practice)
    const base = [1.1, 1.12, 1.08, 1.11, 1.09, 1.1, 1.12, 1.08]; // MR̄ = 0.0257, σ ≈ 0.0228
    const c3 = computeControlChart(pts([...base, 1.2]), { baselineCount: base.length });
    expect(c3.hits.map((h) => h.rule)).toContain("1-3s");
    const c2 = computeControlChart(pts([...base, 1.153, 1.155]), { baselineCount: base.length });
    expect(c2.hits.some((h) => h.rule === "2-2s" && h.index === 9)).toBe(true);
    const c4 = computeControlChart(pts([...base, 1.127, 1.128, 1.127, 1.129]), {
      baselineCount: base.length,
    });
    expect(c4.hits.some((h) => h.rule === "4-1s" && h.index === 11)).toBe(true);
    const better = computeControlChart(pts([...base, 0.98]), { baselineCount: base.length });
    expect(better.hits.map((h) => [h.rule, h.level])).toEqual([["better", "metadata-check"]]);
  });

  it("gives no limits before three points, and none for a flat series", () => {
    expect(computeControlChart(pts([1.1, 1.2])).centre).toBeNull();
    const flat = computeControlChart(pts([1.1, 1.1, 1.1, 1.1]));
    expect(flat.sigma).toBe(0);
    expect(flat.hits).toEqual([]);
  });

  it("names the bad argument", () => {
    expect(() => computeControlChart(pts([1, 2, 3]), { lambda: 0 })).toThrow(
      /lambda must be in \(0, 1\], got 0/,
    );
    expect(() => computeControlChart(pts([1, Number.NaN, 3]))).toThrow(/points\[1\]\.value/);
  });
});

describe("theilSenSlope", () => {
  it("equals least squares on noise-free linear data (cross-check with simple-statistics)", () => {
    // Source: simple-statistics linearRegression (general-purpose reference library from npm)
    const x = [0, 1, 2, 3, 4, 5, 6, 7];
    const y = x.map((v) => 1.1 + 0.015 * v);
    const ts = theilSenSlope(x, y);
    const ls = linearRegression(x.map((v, i) => [v, y[i]!]));
    expect(ts.slope).toBeCloseTo(ls.m, 12);
    expect(ts.intercept).toBeCloseTo(ls.b, 12);
  });

  it("ignores a gross outlier that pulls least squares", () => {
    // Source: Sen 1968 — the median of pairwise slopes has a 29 % breakdown point
    const x = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9];
    const y = x.map((v) => 1 + 0.01 * v);
    y[9] = 3;
    const ts = theilSenSlope(x, y);
    expect(ts.slope).toBeCloseTo(0.01, 10);
    expect(ts.slopeLow!).toBeLessThanOrEqual(0.01 + 1e-12);
    expect(ts.slopeHigh!).toBeGreaterThanOrEqual(0.01 - 1e-12);
  });
});
