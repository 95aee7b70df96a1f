import { describe, expect, it } from "vitest";
import { baselineBand } from "@/lib/qc/baseline-band";

const pts = (values: number[]) => values.map((value, i) => ({ id: `m${i}`, value }));

// Source: NIST/SEMATECH e-Handbook of Statistical Methods §6.3.2.2 — individuals chart,
// σ̂ = MR̄/d₂ with d₂ = 1.128, limits x̄ ± 3σ̂ (= x̄ ± 2.66·MR̄). Values worked by hand below.
describe("baselineBand", () => {
  it("puts the band at the baseline block's mean ± 2.66 × its average moving range", () => {
    // Baseline 1.0, 1.1, 0.9, 1.0, 1.05: x̄ = 1.01, MR̄ = (0.1+0.2+0.1+0.05)/4 = 0.1125, 3σ̂ = 0.29920.
    const band = baselineBand(pts([1.0, 1.1, 0.9, 1.0, 1.05, 1.2]), "up", 5);
    expect(band.centre).toBeCloseTo(1.01, 10);
    expect(band.upper3).toBeCloseTo(1.01 + (3 * 0.1125) / 1.128, 10);
    expect(band.lower3).toBeCloseTo(1.01 - (3 * 0.1125) / 1.128, 10);
    expect(band.beyond).toEqual([]); // 1.2 is inside (upper 1.309)
    expect(band.provisional).toBe(true);
  });

  it("flags only the worse side for a figure where lower is worse (lateral asymmetry)", () => {
    // Baseline 0.95, 0.97, 0.93, 0.96, 0.95: x̄ = 0.952, MR̄ = 0.025, lower = 0.952 − 0.06649 = 0.8855.
    const band = baselineBand(pts([0.95, 0.97, 0.93, 0.96, 0.95, 0.7, 1.05]), "down", 5);
    expect(band.lower3).toBeCloseTo(0.952 - (3 * 0.025) / 1.128, 10);
    expect(band.upper3).toBeCloseTo(0.952 + (3 * 0.025) / 1.128, 10);
    // 0.70 is beyond the lower limit; 1.05 is beyond the upper one (1.0185) but that is the better side.
    expect(band.beyond).toEqual(["m5"]);
  });

  it("has no band before three points", () => {
    const band = baselineBand(pts([0.9, 0.95]), "down", 2);
    expect(band).toMatchObject({ n: 2, centre: null, lower3: null, upper3: null, beyond: [] });
  });
});
