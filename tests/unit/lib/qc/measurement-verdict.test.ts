import { describe, expect, it } from "vitest";
import { measurementVerdict } from "@/lib/qc/measurement-verdict";

const limits = { lateral: 1.5, axial: 1.5 };

describe("measurementVerdict", () => {
  it("passes below 1.5× theory on both axes", () => {
    // Source: Faklaris et al., J Cell Biol 2022, Table 1 — FWHM XY and Z exp/theory < 1.5
    const v = measurementVerdict({
      purpose: "routine",
      beadsUsed: 20,
      ratios: { lateral: 1.2, axial: 1.45 },
      limits,
    });
    expect(v.level).toBe("pass");
    expect(v.evidence.join(" ")).toContain("1.45× theory");
  });

  it("fails at the limit and names the axis", () => {
    // Source: Faklaris et al., J Cell Biol 2022, Table 1 — the limit is strict (< 1.5)
    const v = measurementVerdict({
      purpose: "routine",
      beadsUsed: 20,
      ratios: { lateral: 1.1, axial: 1.62 },
      limits,
    });
    expect(v.level).toBe("fail");
    expect(v.headline).toContain("axial width is above");
  });

  it("asks for a metadata check when narrower than diffraction", () => {
    // common practice: ratios well below 1 mean wrong metadata (QC-PRACTICE.md §2)
    const v = measurementVerdict({
      purpose: "baseline",
      beadsUsed: 20,
      ratios: { lateral: 0.6, axial: 1.0 },
      limits,
    });
    expect(v.level).toBe("check");
  });

  it("refuses a verdict on too few beads", () => {
    const v = measurementVerdict({
      purpose: "routine",
      beadsUsed: 2,
      ratios: { lateral: 1.1, axial: 1.1 },
      limits,
    });
    expect(v.level).toBe("insufficient");
  });

  it("flags a sample whose axial blur grows faster than the model predicts", () => {
    const v = measurementVerdict({
      purpose: "sample",
      beadsUsed: 30,
      ratios: { lateral: 1.2, axial: 2.1 },
      limits,
      depthSlope: { measured: 0.06, measuredLow: 0.05, measuredHigh: 0.07, predicted: 0.01 },
    });
    expect(v.level).toBe("fail");
    expect(v.headline).toContain("larger than declared");
  });

  it("accepts a sample whose trend brackets the prediction", () => {
    const v = measurementVerdict({
      purpose: "sample",
      beadsUsed: 30,
      ratios: { lateral: 1.2, axial: 1.6 },
      limits,
      depthSlope: { measured: 0.02, measuredLow: 0.005, measuredHigh: 0.035, predicted: 0.018 },
    });
    expect(v.level).toBe("pass");
  });

  it("does not judge the lens on a stack sampled far too coarsely", () => {
    // common practice: ≥ 3–4 pixels across the FWHM and ≥ 5 planes across the axial FWHM for a Gaussian fit (METHODS.md §6)
    const v = measurementVerdict({
      purpose: "routine",
      beadsUsed: 12,
      ratios: { lateral: 3.1, axial: 2.4 },
      limits,
      sampling: {
        verdict: "far too coarse",
        message: "pixel 1000 nm vs Nyquist 93 nm",
        enoughForFitting: false,
      },
    });
    expect(v.level).toBe("check");
    expect(v.evidence.join(" ")).toContain("Nyquist");
  });
});
