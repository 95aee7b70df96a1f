import { describe, expect, it } from "vitest";
import { makeRng } from "../../../../fixtures/synthetic-stack";
import {
  coregisterChannels,
  depthProfile,
  depthTrend,
  fieldDependence,
  fitSurface,
  summarizeBeads,
  type BeadResult,
} from "../../../../src/lib/psf";

function bead(p: Partial<BeadResult>): BeadResult {
  return {
    id: 1,
    xPx: 0,
    yPx: 0,
    zPx: 0,
    xUm: 0,
    yUm: 0,
    zUm: 0,
    depthUm: 0,
    apparentDepthUm: 0,
    fwhmXUm: 0.25,
    fwhmYUm: 0.25,
    fwhmZUm: 0.7,
    fwhmXUncertaintyUm: 0.01,
    fwhmYUncertaintyUm: 0.01,
    fwhmZUncertaintyUm: 0.02,
    fwhmZDirectUm: 0.7,
    fwhm3dXUm: 0.25,
    fwhm3dYUm: 0.25,
    fwhm3dZUm: 0.75,
    fwhm3dXUncertaintyUm: 0.005,
    fwhm3dYUncertaintyUm: 0.005,
    fwhm3dZUncertaintyUm: 0.01,
    rotation3dRad: 0,
    amplitude: 1000,
    background: 100,
    snr: 100,
    r2X: 0.99,
    r2Y: 0.99,
    r2Z: 0.99,
    r23d: 0.98,
    r2: 0.99,
    axialAsymmetry: 0,
    axialSkewness: 0,
    axialEnergyRatio: 1,
    lateralAsymmetry: 1,
    driftUmPerUm: 0,
    peak: 1100,
    integrated: 1e5,
    included: true,
    rejectReason: null,
    rejectReasons: [],
    fitConverged: { x: true, y: true, z: true, xyz: true },
    ...p,
  };
}

describe("depthProfile / depthTrend", () => {
  const rng = makeRng(5);
  const beads = Array.from({ length: 40 }, (_, i) => {
    const d = rng() * 30;
    return bead({
      id: i + 1,
      depthUm: d,
      apparentDepthUm: d / 0.8,
      fwhmZUm: 0.7 + 0.02 * d + 0.01 * (rng() - 0.5),
      axialAsymmetry: 0.01 * d,
    });
  });
  it("bins by equal counts, ordered by depth, with medians and quartiles", () => {
    const rows = depthProfile(beads, { minBeadsPerBin: 8 });
    expect(rows.length).toBe(5);
    expect(rows.reduce((a, r) => a + r.count, 0)).toBe(40);
    for (let i = 1; i < rows.length; i++)
      expect(rows[i].depthStartUm).toBeGreaterThanOrEqual(rows[i - 1].depthEndUm);
    for (const r of rows) {
      expect(r.fwhmZ.q1Um!).toBeLessThanOrEqual(r.fwhmZ.medianUm!);
      expect(r.fwhmZ.q3Um!).toBeGreaterThanOrEqual(r.fwhmZ.medianUm!);
    }
    expect(depthProfile(beads, { minBeadsPerBin: 1, maxDepthBins: 3 }).length).toBe(3);
  });
  it("recovers the depth slope of the axial width (Theil–Sen) with an interval", () => {
    const t = depthTrend(beads);
    // Source: computed here — constructed slope 0.02 µm/µm with ±0.005 µm uniform noise.
    expect(t.fwhmZ.slope!).toBeCloseToAbs(0.02, 0.001);
    expect(t.fwhmZ.slopeLow!).toBeLessThanOrEqual(0.02);
    expect(t.fwhmZ.slopeHigh!).toBeGreaterThanOrEqual(0.02);
    expect(t.axialAsymmetry.slope!).toBeCloseToAbs(0.01, 1e-9);
    expect(t.fwhmX.slope!).toBeCloseToAbs(0, 1e-12);
  });
  it("ignores excluded beads", () => {
    const some = beads.map((b, i) => ({ ...b, included: i < 10 }));
    expect(depthProfile(some, { minBeadsPerBin: 5 }).reduce((a, r) => a + r.count, 0)).toBe(10);
  });
});

describe("summarizeBeads", () => {
  it("counts by reason and gives robust width statistics", () => {
    const beads = [
      bead({ id: 1, fwhmXUm: 0.2 }),
      bead({ id: 2, fwhmXUm: 0.3 }),
      bead({ id: 3, fwhmXUm: 0.25 }),
      bead({ id: 4, included: false, rejectReason: "edge", rejectReasons: ["edge"] }),
      bead({ id: 5, included: false, rejectReason: "aggregate", rejectReasons: ["aggregate"] }),
      bead({ id: 6, included: false }),
    ];
    const s = summarizeBeads(beads);
    expect([s.found, s.used, s.rejected]).toEqual([6, 3, 3]);
    expect(s.rejectedByReason).toEqual({ edge: 1, aggregate: 1, user_excluded: 1 });
    expect(s.fwhmX.medianUm).toBeCloseToAbs(0.25, 1e-12);
    expect(s.fwhmX.minUm).toBe(0.2);
    expect(s.fwhmX.maxUm).toBe(0.3);
    expect(s.fwhmX.iqrUm!).toBeCloseToAbs(0.05, 1e-12);
    expect(s.fwhmX.medianFitUncertaintyUm).toBeCloseToAbs(0.01, 1e-12);
    expect(s.fwhmX.medianCorrectedUm).toBeNull();
  });
});

describe("fieldDependence / fitSurface", () => {
  it("recovers a tilted plane (tilt, planarity) and a curved field", () => {
    const rng = makeRng(9);
    const beads: BeadResult[] = [];
    for (let i = 0; i < 30; i++) {
      const x = rng() * 40;
      const y = rng() * 30;
      const z = 5 + 0.01 * (x - 20) - 0.02 * (y - 15);
      beads.push(
        bead({
          id: i + 1,
          xUm: x,
          yUm: y,
          zUm: z,
          apparentDepthUm: 0.1,
          fwhmXUm: 0.25 + 0.002 * Math.hypot(x - 20, y - 15),
        }),
      );
    }
    const f = fieldDependence(beads, { fieldWidthUm: 40, fieldHeightUm: 30, focusLayerThicknessUm: 1 });
    // Source: computed here — constructed plane with gradient (0.01, −0.02): tilt √5·0.01; peak-to-valley over
    // the 40 × 30 µm field = 0.01·40 + 0.02·30 = 1.0 µm.
    expect(f.plane.tiltUmPerUm!).toBeCloseToAbs(Math.sqrt(5) * 0.01, 1e-9);
    expect(f.plane.planarityPeakToValleyUm!).toBeCloseToAbs(1.0, 1e-9);
    expect(f.plane.residualRmsUm!).toBeCloseToAbs(0, 1e-9);
    expect(f.quadratic.planarityPeakToValleyUm!).toBeCloseToAbs(1.0, 1e-6);
    expect(f.fwhmXVsRadius.slope!).toBeCloseToAbs(0.002, 1e-9);
    expect(f.central.count).toBeLessThan(f.full.count);
    const x = [-10, 10, 0, 0, 5, -5, 8];
    const y = [0, 0, -10, 10, 5, -5, -3];
    const q = fitSurface(
      x,
      y,
      x.map((u, i) => 0.001 * (u * u + y[i] * y[i])),
      true,
      10,
      10,
    );
    // Source: computed here — paraboloid 0.001·r²: c3 = c5 = 0.001, peak-to-valley over ±10 µm = 0.2 µm.
    expect(q.coefficients![3]).toBeCloseToAbs(0.001, 1e-9);
    expect(q.planarityPeakToValleyUm!).toBeCloseToAbs(0.2, 1e-9);
  });
});

describe("fieldDependence with few beads in the focus layer", () => {
  it("reports no curved surface from fewer than 18 beads, and no plane from fewer than 9", () => {
    // A flat field whose beads scatter ±0.7 µm in z (a 1.4 µm layer): with 12 beads a quadratic would
    // extrapolate the scatter into the corners, so it is withheld; the plane (≥ 9) is still fitted.
    const rng = makeRng(4);
    const beads = (n: number) =>
      Array.from({ length: n }, (_, i) =>
        bead({
          id: i + 1,
          xUm: rng() * 40,
          yUm: rng() * 40,
          zUm: 5 + 1.4 * (rng() - 0.5),
          apparentDepthUm: 0.5,
        }),
      );
    const twelve = fieldDependence(beads(12), {
      fieldWidthUm: 40,
      fieldHeightUm: 40,
      focusLayerThicknessUm: 1.4,
    });
    expect(twelve.quadratic).toMatchObject({ n: 12, coefficients: null, planarityPeakToValleyUm: null });
    expect(twelve.plane.planarityPeakToValleyUm).not.toBeNull();
    const eight = fieldDependence(beads(8), {
      fieldWidthUm: 40,
      fieldHeightUm: 40,
      focusLayerThicknessUm: 1.4,
    });
    expect(eight.plane).toMatchObject({ n: 8, coefficients: null, tiltUmPerUm: null });
  });
});

describe("coregisterChannels", () => {
  it("matches beads and reports lateral/axial shifts against the resolution", () => {
    const ref = Array.from({ length: 10 }, (_, i) =>
      bead({ id: i + 1, xUm: 2 * i, yUm: i % 3, zUm: 3 + 0.5 * i, depthUm: 0.5 * i }),
    );
    // test channel: shifted by (0.03, 0.04) laterally and by 0.1 + 0.01·depth axially; one extra unmatched bead
    const test = ref.map((b, i) => ({
      ...b,
      id: 100 + i,
      xUm: b.xUm + 0.03,
      yUm: b.yUm + 0.04,
      zUm: b.zUm + 0.1 + 0.01 * b.depthUm,
    }));
    test.push(bead({ id: 999, xUm: 50, yUm: 50, zUm: 50 }));
    const c = coregisterChannels(ref, test, {
      toleranceUm: 0.5,
      resolutionUm: { lateral: 0.25, axial: 0.7 },
    });
    expect(c.pairs.length).toBe(10);
    expect(c.unmatchedTest).toBe(1);
    // Source: QC-PRACTICE.md §2 definitions (Δlateral = √(Δx² + Δy²), Δaxial = |Δz|); shift values computed here.
    expect(c.medianLateralUm!).toBeCloseToAbs(0.05, 1e-9);
    expect(c.lateralRatio!).toBeCloseToAbs(0.2, 1e-9);
    expect(c.dzVsDepth.slope!).toBeCloseToAbs(0.01, 1e-9);
    expect(() =>
      coregisterChannels(ref, test, { toleranceUm: 0, resolutionUm: { lateral: 1, axial: 1 } }),
    ).toThrow(/toleranceUm must be > 0; got 0/);
  });
});
