import { describe, expect, it } from "vitest";
import type { DepthProfileRow } from "@/lib/psf/analysis-types";
import { fitSampleRi, type MeasurementParameters } from "@/lib/psf/run-measurement-pipeline";
import { predictDepthCurve, theoreticalFwhm } from "@/lib/optics";

const optics = { na: 1.4, wavelengthNm: 520, immersionRi: 1.518, coverslipThicknessUm: 170 };
const params: MeasurementParameters = {
  channel: 0,
  modality: "widefield",
  na: 1.4,
  immersionRi: 1.518,
  sampleRi: 1.45,
  emissionWavelengthNm: 520,
};
const theory = theoreticalFwhm({
  modality: "widefield",
  na: 1.4,
  immersionRi: 1.518,
  emissionWavelengthNm: 520,
});

function bin(apparentDepthUm: number, axialUm: number): DepthProfileRow {
  const w = (medianUm: number | null) => ({ medianUm }) as DepthProfileRow["fwhmZ"];
  return {
    depthStartUm: apparentDepthUm - 0.5,
    depthEndUm: apparentDepthUm + 0.5,
    depthMedianUm: apparentDepthUm,
    apparentDepthMedianUm: apparentDepthUm,
    count: 5,
    fwhmX: w(0.2),
    fwhmY: w(0.2),
    fwhmZ: w(axialUm),
    fwhmZDirect: w(axialUm),
    medianAxialAsymmetry: null,
  };
}

describe("fitSampleRi (the measurement's effective-RI step)", () => {
  // Source: Gibson & Lanni, JOSA A 8:1601 (1991) — known truth: axial widths from that model at n_s = 1.45 under a 1.518 oil lens.
  const depths = [3, 6, 9, 12];
  const truth = predictDepthCurve({ ...optics, sampleRi: 1.45 }, depths);

  it("fits when the shallowest bin sits just above the estimated coverslip", () => {
    // The coverslip reference is a low percentile of bead positions, so the first bin's median
    // depth can be slightly negative (seen in practice: −0.002 µm). It counts as the surface.
    const surface = predictDepthCurve({ ...optics, sampleRi: 1.45 }, [0])[0]!;
    const rows = [
      bin(-0.002, surface.axialFwhmUm),
      ...truth.map((t, i) => bin(t.nominalFocusUm ?? depths[i]!, t.axialFwhmUm)),
    ];
    const out = fitSampleRi({ depthProfile: rows }, params, theory, optics);
    expect(out.fit, "reason" in out ? String(out.reason) : "").not.toBeNull();
    expect(out.fit!.sampleRi).toBeCloseTo(1.45, 2);
    expect(out.fit!.rows).toHaveLength(5);
  });

  it("leaves out a bin far above the surface instead of failing the fit", () => {
    const rows = [bin(-3, 0.6), ...truth.map((t, i) => bin(t.nominalFocusUm ?? depths[i]!, t.axialFwhmUm))];
    const out = fitSampleRi({ depthProfile: rows }, params, theory, optics);
    expect(out.fit).not.toBeNull();
    expect(out.fit!.rows).toHaveLength(4);
  });
});
