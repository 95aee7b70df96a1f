import { describe, it, expect } from "vitest";
import { diffractionLimitedReference, plannerRows, rankObjectives, type ObjectiveSpec } from "@/lib/optics";

const objectives: ObjectiveSpec[] = [
  { id: "oil", name: "Oil immersion 1.4", na: 1.4, immersionRi: 1.518 },
  { id: "water", name: "Water immersion 1.2", na: 1.2, immersionRi: 1.333 },
  { id: "silicone", name: "Silicone immersion 1.3", na: 1.3, immersionRi: 1.406 },
];

describe("plannerRows", () => {
  it("returns the public planner rows for oil NA 1.3 into water", () => {
    const objective = { id: "o", name: "Oil 1.3", na: 1.3, immersionRi: 1.518, coverslipRi: 1.518 };
    const rows = plannerRows({
      objective,
      sampleRi: 1.333,
      wavelengthNm: 520,
      depthsUm: [0, 12.233, 24.004],
    });
    expect(Object.keys(rows[0]).sort()).toEqual([
      "actualDepthUm",
      "axialFwhmUm",
      "depthUm",
      "focalShiftFactor",
      "lateralFwhmUm",
      "peakRelative",
    ]);
    // Source: METHODS.md §4.3 table (GL computed here): nominal 12.233 µm ↔ actual 10 µm, 24.004 ↔ 20 µm.
    expect(rows[1].actualDepthUm).toBeCloseToAbs(10, 0.05);
    expect(rows[2].actualDepthUm).toBeCloseToAbs(20, 0.05);
    // Source: METHODS.md check #24 and §5 table (computed here): axial 1.297 µm and peak 0.345 at 10 µm.
    expect(rows[1].axialFwhmUm).toBeCloseToAbs(1.297, 0.02);
    expect(rows[1].peakRelative).toBeCloseToAbs(0.345, 0.005);
    expect(rows[1].focalShiftFactor).toBeCloseToAbs(0.817, 0.005);
    expect(rows[0].actualDepthUm).toBe(0);
  });

  it("gives the diffraction-limited reference with NA capped at the sample RI", () => {
    const ref = diffractionLimitedReference({ objective: objectives[0], sampleRi: 1.333, wavelengthNm: 520 });
    // Source: METHODS.md §2.1 Airy FWHM 0.5145 λ/NA with NA_eff = n_s (§4.3 rule).
    expect(ref.lateralFwhmUm).toBeCloseTo((0.5145 * 0.52) / 1.333, 9);
    expect(ref.formulaId).toBe("widefield-airy-nonparaxial-axial");
  });

  it("rejects negative depths", () => {
    expect(() =>
      plannerRows({ objective: objectives[0], sampleRi: 1.38, wavelengthNm: 520, depthsUm: [-1] }),
    ).toThrow(/depthsUm\[0\] must be finite and ≥ 0, got -1/);
  });
});

describe("rankObjectives", () => {
  it("prefers immersion close to tissue RI for deep imaging and explains why", () => {
    // Source: Diel, Lichtman & Richardson, Nat Protoc 15:2773 (2020) (confirmed: search, abstract): matching the
    // immersion RI to the sample avoids depth-dependent spherical aberration; METHODS §5 table (computed here).
    const ranking = rankObjectives({ objectives, sampleRi: 1.38, wavelengthNm: 520, depthRangeUm: [0, 50] });
    expect(ranking.map((r) => r.rank)).toEqual([1, 2, 3]);
    expect(ranking[ranking.length - 1].objectiveId).toBe("oil");
    for (const r of ranking) {
      expect(r.reason).toMatch(/axial FWHM/);
      expect(r.deepAxialFwhmUm).toBeGreaterThan(r.surfaceAxialFwhmUm);
    }
    for (let i = 1; i < ranking.length; i++)
      expect(ranking[i].deepAxialFwhmUm).toBeGreaterThanOrEqual(ranking[i - 1].deepAxialFwhmUm * 0.95);
    const oil = ranking.find((r) => r.objectiveId === "oil")!;
    // The useful depth really is the 25 % growth point (and the oil lens into 1.38 loses it within a few µm).
    expect(oil.usefulDepthUm).not.toBeNull();
    expect(oil.usefulDepthUm!).toBeLessThan(5);
  });

  it("reports no useful-depth limit for a matched pair", () => {
    const ranking = rankObjectives(
      {
        objectives: [{ id: "w", name: "Water", na: 1.2, immersionRi: 1.333 }],
        sampleRi: 1.333,
        wavelengthNm: 520,
        depthRangeUm: [0, 30],
      },
      { maxSearchDepthUm: 100 },
    );
    expect(ranking[0].usefulDepthUm).toBeNull();
    expect(ranking[0].reason).toMatch(/at least 100 µm/);
  });

  it("rejects an empty list and a reversed range", () => {
    expect(() =>
      rankObjectives({ objectives: [], sampleRi: 1.38, wavelengthNm: 520, depthRangeUm: [0, 10] }),
    ).toThrow(/must not be empty/);
    expect(() =>
      rankObjectives({ objectives, sampleRi: 1.38, wavelengthNm: 520, depthRangeUm: [10, 0] }),
    ).toThrow(/depthRangeUm/);
  });
});
