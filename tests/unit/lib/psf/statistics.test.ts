import * as ss from "simple-statistics";
import { describe, expect, it } from "vitest";
import { makeRng, makeSyntheticStack } from "../../../../fixtures/synthetic-stack";
import {
  estimateBackground,
  madSigma,
  median,
  normalQuantile,
  quantile,
  theilSen,
} from "../../../../src/lib/psf";

describe("quantile / median / madSigma", () => {
  it("agree with simple-statistics (type-7 quantiles)", () => {
    const rng = makeRng(1);
    const v = Array.from({ length: 257 }, () => rng() * 100 - 20);
    // Source: simple-statistics 7.12.1 (general-purpose npm reference), same definitions.
    for (const p of [0, 0.05, 0.25, 0.5, 0.75, 0.95, 1])
      expect(quantile(v, p)).toBeCloseToAbs(ss.quantile(v, p), 1e-12);
    expect(median(v)).toBeCloseToAbs(ss.median(v), 1e-12);
    expect(madSigma(v)).toBeCloseToAbs(1.482602218505602 * ss.medianAbsoluteDeviation(v), 1e-9);
  });
  it("ignore non-finite values and return NaN when empty", () => {
    expect(median([1, Number.NaN, 3])).toBe(2);
    expect(median([])).toBeNaN();
    expect(() => quantile([1], 1.5)).toThrow(/p must be in \[0, 1\]; got 1.5/);
  });
  it("do not mutate their input", () => {
    const v = [3, 1, 2];
    median(v);
    expect(v).toEqual([3, 1, 2]);
  });
});

describe("theilSen", () => {
  it("is exact on a line and matches least squares there (simple-statistics)", () => {
    const x = [0, 1, 2, 3, 4, 5, 6];
    const y = x.map((v) => 0.3 + 0.05 * v);
    const t = theilSen(x, y);
    const lr = ss.linearRegression(x.map((v, i) => [v, y[i]]));
    // Source: simple-statistics linearRegression (reference) — identical on noise-free data.
    expect(t.slope!).toBeCloseToAbs(lr.m, 1e-12);
    expect(t.intercept!).toBeCloseToAbs(lr.b, 1e-12);
  });
  it("resists an outlier that drags least squares", () => {
    const x = Array.from({ length: 20 }, (_, i) => i);
    const y = x.map((v) => 1 + 0.1 * v);
    y[19] = 50;
    const t = theilSen(x, y);
    const lr = ss.linearRegression(x.map((v, i) => [v, y[i]]));
    // Source: computed here — one gross outlier in 20 points leaves the median slope at the truth.
    expect(t.slope!).toBeCloseToAbs(0.1, 1e-9);
    expect(Math.abs(lr.m - 0.1)).toBeGreaterThan(0.3);
  });
  it("gives an interval that covers the true slope under noise", () => {
    const rng = makeRng(8);
    const x = Array.from({ length: 40 }, (_, i) => i * 0.5);
    const y = x.map((v) => 0.2 + 0.02 * v + 0.01 * (rng() - 0.5));
    const t = theilSen(x, y);
    expect(t.slopeLow!).toBeLessThanOrEqual(0.02);
    expect(t.slopeHigh!).toBeGreaterThanOrEqual(0.02);
    expect(t.confidence).toBe(0.95);
  });
  it("returns nulls with fewer than two distinct x", () => {
    expect(theilSen([1, 1], [2, 3]).slope).toBeNull();
    expect(() => theilSen([1], [1, 2])).toThrow(/lengths differ/);
  });
  it("normalQuantile(0.975) ≈ 1.959964", () => {
    // Source: from memory (standard normal table).
    expect(normalQuantile(0.975)).toBeCloseToAbs(1.959964, 1e-6);
  });
});

describe("estimateBackground", () => {
  it("uint16 histogram median/MAD equals simple-statistics on all voxels", () => {
    const s = makeSyntheticStack({
      shape: [6, 40, 40],
      voxelSizeUm: { x: 0.1, y: 0.1, z: 0.2 },
      beads: [],
      background: 100,
      readNoise: 2,
      seed: 4,
    });
    const b = estimateBackground(s);
    const arr = Array.from(s.data);
    // Source: simple-statistics median / medianAbsoluteDeviation on the same voxels.
    expect(b.median).toBe(ss.median(arr));
    expect(b.madSigmaRaw).toBeCloseToAbs(1.482602218505602 * ss.medianAbsoluteDeviation(arr), 1e-9);
    expect(b.method).toBe("histogram");
    // Source: computed here — Poisson(100) + N(0, 2²): σ = √104 ≈ 10.2; MAD of integer data is quantised.
    expect(b.noiseSigma).toBeGreaterThan(8.5);
    expect(b.noiseSigma).toBeLessThan(12);
  });
  it("float32 subsample estimate and the floor for a constant image", () => {
    const s = makeSyntheticStack({
      shape: [4, 30, 30],
      voxelSizeUm: { x: 0.1, y: 0.1, z: 0.2 },
      beads: [],
      dtype: "float32",
      seed: 2,
    });
    expect(estimateBackground(s).method).toBe("subsample");
    const c = {
      data: new Uint16Array(1000).fill(7),
      shape: [10, 10, 10] as [number, number, number],
      dtype: "uint16" as const,
      voxelSizeUm: { x: 1, y: 1, z: 1 },
    };
    const b = estimateBackground(c);
    expect(b.median).toBe(7);
    expect(b.madSigmaRaw).toBe(0);
    // Source: computed here — quantisation noise of integer data, 1/√12.
    expect(b.noiseSigma).toBeCloseToAbs(1 / Math.sqrt(12), 1e-12);
  });
  it("throws TypeError on empty data", () => {
    expect(() =>
      estimateBackground({ data: new Uint16Array(0), shape: [0, 0, 0], dtype: "uint16", voxelSizeUm: null }),
    ).toThrow(TypeError);
  });
});
