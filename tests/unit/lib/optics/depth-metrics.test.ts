import { describe, it, expect } from "vitest";
import {
  createGibsonLanniModel,
  findGibsonLanniFocus,
  gibsonLanniDepthMetrics,
  predictDepthCurve,
  type GibsonLanniParams,
} from "@/lib/optics";

const oilToWater: GibsonLanniParams = {
  na: 1.3,
  wavelengthNm: 520,
  immersionRi: 1.518,
  sampleRi: 1.333,
  coverslipRi: 1.518,
};

describe("findGibsonLanniFocus", () => {
  it("finds the oil → water peak at 10 µm", () => {
    const f = findGibsonLanniFocus(oilToWater, 10);
    // Source: METHODS.md check #22 (Gibson & Lanni 1991 model, computed here with scipy): nominal 12.233 µm, I/I_ideal 0.3450.
    expect(f.nominalFocusUm).toBeCloseToAbs(12.233, 0.005);
    expect(f.peakRelative).toBeCloseToAbs(0.345, 0.001);
    expect(f.converged).toBe(true);
    expect(f.iterations).toBeGreaterThan(0);
  });
  it("reports non-convergence when the iteration cap is hit", () => {
    const f = findGibsonLanniFocus(oilToWater, 10, { maxIterations: 2 });
    expect(f.converged).toBe(false);
    expect(f.reason).toMatch(/maxIterations/);
  });
  it("rejects a negative depth", () => {
    expect(() => findGibsonLanniFocus(oilToWater, -1)).toThrow(/depthUm must be finite and ≥ 0, got -1/);
  });
});

describe("gibsonLanniDepthMetrics: oil objective into water", () => {
  const model = createGibsonLanniModel(oilToWater);
  const rows = predictDepthCurve(model, [0, 5, 10, 20, 50]);

  it("gives the depth-dependent ζ", () => {
    // Source: METHODS.md check #23 (computed here; Hell 1993 ≈ 0.83 at NA 1.3, confirmed: search).
    expect(rows[1].focalShiftFactor).toBeCloseToAbs(0.796, 0.002);
    expect(rows[3].focalShiftFactor).toBeCloseToAbs(0.833, 0.002);
    expect(rows[4].focalShiftFactor).toBeCloseToAbs(0.849, 0.002);
    // Oil → water: ζ < 1 at every depth (METHODS §4.1, confirmed: search, Diel et al. 2020).
    for (const r of rows) expect(r.focalShiftFactor).toBeLessThan(1);
  });

  it("gives the axial FWHM growth with depth", () => {
    // Source: METHODS.md check #24 (computed here): 0.641 µm at 0 and 1.297 µm at 10 µm (nominal z).
    expect(rows[0].axialFwhmUm).toBeCloseToAbs(0.641, 0.01);
    expect(rows[2].axialFwhmUm).toBeCloseToAbs(1.297, 0.01);
    for (let i = 1; i < rows.length; i++)
      expect(rows[i].axialFwhmUm).toBeGreaterThan(rows[i - 1].axialFwhmUm);
  });

  it("gives the peak loss with depth", () => {
    // Source: METHODS.md §5 table (GL computed here): 0.521 / 0.345 / 0.231 / 0.118 at 5/10/20/50 µm.
    expect(rows[1].peakRelative).toBeCloseToAbs(0.521, 0.003);
    expect(rows[2].peakRelative).toBeCloseToAbs(0.345, 0.003);
    expect(rows[3].peakRelative).toBeCloseToAbs(0.231, 0.003);
    expect(rows[4].peakRelative).toBeCloseToAbs(0.118, 0.003);
  });

  it("puts the side lobes on the far side", () => {
    // Source: METHODS.md check #25 (computed here): far/near = 0.295/0.012 at 10 µm; §8 table 0.377/0.010 at 20 µm.
    expect(rows[2].sideLobeFar).toBeCloseToAbs(0.295, 0.01);
    expect(rows[2].sideLobeNear).toBeCloseToAbs(0.012, 0.01);
    expect(rows[3].sideLobeFar).toBeCloseToAbs(0.377, 0.01);
    expect(rows[2].sideLobeAsymmetry).toBeGreaterThan(0);
  });

  it("has a lateral FWHM close to the Airy value at the coverslip", () => {
    // Source: Airy FWHM 0.5145 λ/NA (METHODS §2.1, computed there); the GL in-focus PSF at z_p = 0 is an Airy pattern.
    expect(rows[0].lateralFwhmUm).toBeCloseToAbs((0.5145 * 0.52) / 1.3, 0.001);
    expect(rows[4].lateralFwhmUm).toBeGreaterThan(rows[0].lateralFwhmUm);
  });
});

describe("gibsonLanniDepthMetrics: other pairs", () => {
  it("matched high-NA axial FWHM", () => {
    // Source: METHODS.md §3 check values (computed here): axial FWHM 0.5909 µm for NA 1.4, n 1.515, λ 0.6 µm.
    const m = gibsonLanniDepthMetrics(
      { na: 1.4, wavelengthNm: 600, immersionRi: 1.515, sampleRi: 1.515, coverslipRi: 1.515 },
      0,
      { lateral: false, sideLobes: false },
    );
    expect(m.axialFwhmUm).toBeCloseToAbs(0.5909, 0.001);
  });

  it("air NA 0.95 → water: lobes flip to the near side, ζ > 1", () => {
    const air = gibsonLanniDepthMetrics(
      { na: 0.95, wavelengthNm: 520, immersionRi: 1, sampleRi: 1.333, coverslipRi: 1.5255 },
      10,
    );
    // Source: METHODS.md check #25 (computed here): 0.032 far / 0.349 near.
    expect(air.sideLobeFar).toBeCloseToAbs(0.032, 0.01);
    expect(air.sideLobeNear).toBeCloseToAbs(0.349, 0.01);
    // Source: METHODS.md §4.3 table (computed here): ζ(10 µm) = 1.525; §5 table peak 0.449.
    expect(air.focalShiftFactor).toBeCloseToAbs(1.525, 0.003);
    expect(air.peakRelative).toBeCloseToAbs(0.449, 0.003);
  });

  it("asymmetry flips sign when the mismatch is reversed", () => {
    const base = { na: 1.2, wavelengthNm: 520 };
    const higher = gibsonLanniDepthMetrics({ ...base, immersionRi: 1.333, sampleRi: 1.38 }, 20);
    // Source: METHODS.md §8 table (computed here with the scalar GL model): water NA 1.2 → 1.38 at 20 µm, 0.018 far / 0.163 near.
    expect(higher.sideLobeFar).toBeCloseToAbs(0.018, 0.01);
    expect(higher.sideLobeNear).toBeCloseToAbs(0.163, 0.01);
    // Reversed pair (design immersion 1.38 into water): the lobes must move to the far side (METHODS §8 rule).
    const lower = gibsonLanniDepthMetrics({ ...base, immersionRi: 1.38, sampleRi: 1.333 }, 20);
    expect(higher.sideLobeAsymmetry).toBeLessThan(-0.1);
    expect(lower.sideLobeAsymmetry).toBeGreaterThan(0.1);
    expect(lower.focalShiftFactor).toBeLessThan(1);
    expect(higher.focalShiftFactor).toBeGreaterThan(1);
  });

  it("reproduces the other METHODS §8 side-lobe rows", () => {
    // Source: METHODS.md §8 table (computed here): oil NA 1.4 → 1.45 at 10 µm 0.202/0.017; silicone NA 1.3 → 1.38 at 20 µm 0.176/0.020.
    const oil = gibsonLanniDepthMetrics(
      { na: 1.4, wavelengthNm: 520, immersionRi: 1.518, sampleRi: 1.45 },
      10,
      { lateral: false },
    );
    expect(oil.sideLobeFar).toBeCloseToAbs(0.202, 0.01);
    expect(oil.sideLobeNear).toBeCloseToAbs(0.017, 0.01);
    const silicone = gibsonLanniDepthMetrics(
      { na: 1.3, wavelengthNm: 520, immersionRi: 1.406, sampleRi: 1.38 },
      20,
      { lateral: false },
    );
    expect(silicone.sideLobeFar).toBeCloseToAbs(0.176, 0.01);
    expect(silicone.sideLobeNear).toBeCloseToAbs(0.02, 0.01);
    // Source: METHODS.md §4.3 and §5 tables (computed here): ζ 0.917 / 0.961, peak 0.554 / 0.633.
    expect(oil.focalShiftFactor).toBeCloseToAbs(0.917, 0.002);
    expect(silicone.focalShiftFactor).toBeCloseToAbs(0.961, 0.002);
    expect(oil.peakRelative).toBeCloseToAbs(0.554, 0.003);
    expect(silicone.peakRelative).toBeCloseToAbs(0.633, 0.003);
  });

  it("water NA 1.2 → 1.38 and a coverslip error on a water lens", () => {
    // Source: METHODS.md check #32 (computed here): peak 0.666 at 20 µm.
    expect(
      gibsonLanniDepthMetrics({ na: 1.2, wavelengthNm: 520, immersionRi: 1.333, sampleRi: 1.38 }, 20, {
        lateral: false,
      }).peakRelative,
    ).toBeCloseToAbs(0.666, 0.003);
    // Source: METHODS.md check #33 (computed here): coverslip 175 instead of 170 µm, n_g 1.5255, z_p 10 µm → peak 0.8545.
    const cs = gibsonLanniDepthMetrics(
      {
        na: 1.2,
        wavelengthNm: 520,
        immersionRi: 1.333,
        sampleRi: 1.333,
        coverslipRi: 1.5255,
        coverslipThicknessUm: 175,
        coverslipThicknessDesignUm: 170,
      },
      10,
      { lateral: false, sideLobes: false },
    );
    expect(cs.peakRelative).toBeCloseToAbs(0.8545, 0.002);
    expect(Number.isNaN(cs.lateralFwhmUm)).toBe(true);
  });

  it("matched pair: ζ = 1, symmetric first lobes of 0.047", () => {
    const m = gibsonLanniDepthMetrics({ ...oilToWater, sampleRi: 1.518 }, 10);
    // Source: METHODS.md §4.3 and §8 tables (computed here): matched → ζ 1.000 and 0.047/0.047.
    expect(m.focalShiftFactor).toBeCloseToAbs(1, 1e-4);
    expect(m.sideLobeFar).toBeCloseToAbs(0.047, 0.01);
    expect(m.sideLobeNear).toBeCloseToAbs(0.047, 0.01);
    expect(m.peakRelative).toBeCloseToAbs(1, 1e-6);
  });
});

describe("gibsonLanniDepthMetrics: layer errors (METHODS §5 related effects)", () => {
  const fast = { lateral: false, sideLobes: false };
  it("immersion oil below its design index", () => {
    const base = {
      na: 1.4,
      wavelengthNm: 520,
      immersionRiDesign: 1.518,
      sampleRi: 1.518,
      coverslipRi: 1.518,
    };
    // Source: METHODS.md §5 (GL computed here): oil 0.003 below design at NA 1.4, t_i* = 150 µm → peak 0.77 and a 0.64 µm focal shift at the coverslip.
    const low = gibsonLanniDepthMetrics({ ...base, immersionRi: 1.515 }, 0, fast);
    expect(low.peakRelative).toBeCloseToAbs(0.77, 0.01);
    expect(low.nominalFocusUm).toBeCloseToAbs(0.64, 0.01);
    // Source: METHODS.md §5 and §9.2 (computed here): 0.0056 below (oil at about 37 °C) → 0.53.
    expect(gibsonLanniDepthMetrics({ ...base, immersionRi: 1.5124 }, 0, fast).peakRelative).toBeCloseToAbs(
      0.53,
      0.01,
    );
  });
  it("coverslip thickness errors hurt a water lens, not an oil lens", () => {
    // Source: METHODS.md §5 (GL computed here): water NA 1.2, bead 10 µm, coverslip 160 µm instead of 170 → peak 0.544.
    const water = gibsonLanniDepthMetrics(
      {
        na: 1.2,
        wavelengthNm: 520,
        immersionRi: 1.333,
        sampleRi: 1.333,
        coverslipThicknessUm: 160,
        coverslipThicknessDesignUm: 170,
      },
      10,
      fast,
    );
    expect(water.peakRelative).toBeCloseToAbs(0.544, 0.003);
    // Source: METHODS.md §5 (computed here): an oil lens with a ±10 µm coverslip error loses almost nothing (0.993).
    const oil = gibsonLanniDepthMetrics(
      {
        na: 1.4,
        wavelengthNm: 520,
        immersionRi: 1.518,
        sampleRi: 1.518,
        coverslipThicknessUm: 180,
        coverslipThicknessDesignUm: 170,
      },
      10,
      fast,
    );
    expect(oil.peakRelative).toBeCloseToAbs(0.993, 0.003);
  });
});
