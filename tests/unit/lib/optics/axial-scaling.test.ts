import { describe, it, expect } from "vitest";
import { axialScalingFactors, makeNominalToActualDepth, type GibsonLanniParams } from "@/lib/optics";

describe("axialScalingFactors", () => {
  it("oil 1.518 → water 1.333 at NA 1.3", () => {
    const f = axialScalingFactors({ na: 1.3, immersionRi: 1.518, sampleRi: 1.333 });
    // Source: METHODS.md check #26 (paraxial n_s/n_i; Carlsson/Hell, confirmed: search).
    expect(f.paraxial.factor).toBeCloseToAbs(0.8781, 1e-4);
    // Source: METHODS.md check #27 (Visser 1992 marginal-ray formula, confirmed: search).
    expect(f.marginal.factor).toBeCloseToAbs(0.3761, 1e-4);
    // Source: METHODS.md check #28 (computed here; definitions confirmed: search, code README).
    expect(f.mean.factor).toBeCloseToAbs(0.8023, 1e-4);
    expect(f.median.factor).toBeCloseToAbs(0.8484, 1e-4);
    // Source: METHODS.md check #29 (computed here).
    expect(f.rmsOptimal.factor).toBeCloseToAbs(0.7498, 1e-4);
    expect(f.rmsOptimal.model).toBe("rms-optimal");
  });
  it("marginal at NA 1.2 and the air → water compression", () => {
    // Source: METHODS.md check #27 (Visser 1992 formula).
    expect(
      axialScalingFactors({ na: 1.2, immersionRi: 1.518, sampleRi: 1.333 }).marginal.factor,
    ).toBeCloseToAbs(0.6243, 1e-4);
    // Source: METHODS.md check #29 (computed here): air → water NA 0.95 RMS-optimal 1.6620.
    const air = axialScalingFactors({ na: 0.95, immersionRi: 1, sampleRi: 1.333 });
    expect(air.rmsOptimal.factor).toBeCloseToAbs(1.662, 1e-4);
    expect(air.paraxial.factor).toBeGreaterThan(1);
  });
  it("reports ray models as undefined when NA exceeds the sample RI", () => {
    // Source: METHODS.md §4.2 table, row oil → water NA 1.4: marginal/mean/median n/a, RMS-optimal 0.7172 (computed here).
    const f = axialScalingFactors({ na: 1.4, immersionRi: 1.518, sampleRi: 1.333 });
    expect(Number.isNaN(f.marginal.factor)).toBe(true);
    expect(Number.isNaN(f.mean.factor)).toBe(true);
    expect(f.rmsOptimal.factor).toBeCloseToAbs(0.7172, 1e-4);
  });
  it("reproduces further METHODS §4.2 rows", () => {
    // Source: METHODS.md §4.2 table (computed here).
    const w = axialScalingFactors({ na: 1.2, immersionRi: 1.333, sampleRi: 1.38 });
    expect(w.marginal.factor).toBeCloseToAbs(1.1741, 1e-4);
    expect(w.rmsOptimal.factor).toBeCloseToAbs(1.07, 1e-4);
    const c = axialScalingFactors({ na: 1.0, immersionRi: 1.333, sampleRi: 1.56 });
    expect(c.mean.factor).toBeCloseToAbs(1.2163, 1e-4);
    expect(c.median.factor).toBeCloseToAbs(1.1959, 1e-4);
  });
});

describe("makeNominalToActualDepth", () => {
  const oilToWater: GibsonLanniParams = {
    na: 1.3,
    wavelengthNm: 520,
    immersionRi: 1.518,
    sampleRi: 1.333,
    coverslipRi: 1.518,
  };
  const conv = makeNominalToActualDepth(oilToWater, { maxDepthUm: 60 });

  it("converts the GL focal shift both ways", () => {
    expect(conv.model).toBe("gibson-lanni-peak");
    expect(conv.converged).toBe(true);
    // Source: METHODS.md §4.3 table (GL computed here): bead at 10 µm focuses at nominal 12.233 µm, 50 µm at 58.912 µm.
    expect(conv.toNominalUm(10)).toBeCloseToAbs(12.233, 0.05);
    expect(conv.toActualUm(12.233)).toBeCloseToAbs(10, 0.05);
    expect(conv.toActualUm(58.912)).toBeCloseToAbs(50, 0.05);
    // Source: METHODS.md check #23 (computed here): ζ(20 µm) = 0.833.
    expect(20 / conv.toNominalUm(20)).toBeCloseToAbs(0.833, 0.002);
  });

  it("is monotone, inverse-consistent and clamps above the coverslip", () => {
    let previous = -1;
    for (let nominal = 0; nominal <= 80; nominal += 0.7) {
      const a = conv.toActualUm(nominal);
      expect(a).toBeGreaterThanOrEqual(previous);
      previous = a;
      if (a > 0.5) expect(conv.toNominalUm(a)).toBeCloseTo(nominal, 6);
    }
    expect(conv.toActualUm(-3)).toBe(0);
    // Oil → water stretches the image: the local factor stays below 1 (Diel et al. 2020, confirmed: search).
    expect(conv.localFactorAt(30)).toBeLessThan(1);
    expect(conv.localFactorAt(30)).toBeGreaterThan(0.8781 * 0.9);
  });

  it("is the identity for a matched pair", () => {
    // Source: METHODS.md §4.3 table, any matched pair → ζ = 1.000 (computed here).
    const matched = makeNominalToActualDepth({ ...oilToWater, sampleRi: 1.518 }, { maxDepthUm: 40 });
    expect(matched.toActualUm(25)).toBeCloseToAbs(25, 1e-3);
  });

  it("rejects bad options", () => {
    expect(() => makeNominalToActualDepth(oilToWater, { maxDepthUm: 0 })).toThrow(
      /maxDepthUm must be > 0, got 0/,
    );
    expect(() => makeNominalToActualDepth(oilToWater, { sampleCount: 2 })).toThrow(
      /sampleCount must be an integer ≥ 3, got 2/,
    );
  });
});
