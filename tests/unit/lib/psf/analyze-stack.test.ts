import { describe, expect, it } from "vitest";
import { makeRng, makeSyntheticStack, type SyntheticBead } from "../../../../fixtures/synthetic-stack";
import type { Stack } from "../../../../src/lib/tiff/stack";
import { analyzeStack, ENGINE_VERSION, recomputeSummary, type AnalysisStage } from "../../../../src/lib/psf";

const VOXEL = { x: 0.065, y: 0.065, z: 0.1 };
const FWHM = { lateral: 0.25, axial: 0.7 };

function scatteredBeads(
  n: number,
  seed: number,
  shape: [number, number, number],
  amp = [900, 1600],
): SyntheticBead[] {
  const rng = makeRng(seed);
  const out: SyntheticBead[] = [];
  const [nz, ny, nx] = shape;
  let guard = 0;
  while (out.length < n && guard++ < 10000) {
    const b = {
      x: 14 + rng() * (nx - 28),
      y: 14 + rng() * (ny - 28),
      z: 18 + rng() * (nz - 36),
      amplitude: amp[0] + rng() * (amp[1] - amp[0]),
    };
    // Keep ≥ 1.2 µm lateral or ≥ 2 µm axial from the others (outside the 3 FWHM / 2 FWHM exclusion).
    if (
      out.every(
        (o) =>
          Math.hypot((o.x - b.x) * VOXEL.x, (o.y - b.y) * VOXEL.y) > 1.2 ||
          Math.abs(o.z - b.z) * VOXEL.z > 2.2,
      )
    )
      out.push(b);
  }
  return out;
}

describe("analyzeStack — known truth with Gaussian beads", () => {
  const shape: [number, number, number] = [70, 128, 128];
  const beads = scatteredBeads(12, 21, shape);
  const stack = makeSyntheticStack({ shape, voxelSizeUm: VOXEL, beads, fwhmUm: FWHM, seed: 3 });
  const copy = stack.data.slice();
  const options = { expectedFwhmUm: { ...FWHM }, beadDiameterNm: 100 };
  const optionsCopy = JSON.parse(JSON.stringify(options));
  const stages: Array<[AnalysisStage, number]> = [];
  const r = analyzeStack(stack, { ...options, onProgress: (s, f) => stages.push([s, f]) });

  it("finds every bead, includes them, and recovers the widths", () => {
    expect(r.summary.found).toBe(beads.length);
    expect(r.summary.used).toBe(beads.length);
    // Source: computed here — Gaussian PSF of known FWHM 0.25 / 0.7 µm (fixture default), SNR ≈ 90–160
    // (amplitudes ±25 %, like a monodisperse bead population: the aggregate rule compares integrated intensities);
    // median of 12 beads within 2 % (lateral) and 3 % (axial).
    expect(r.summary.fwhmX.medianUm! / 0.25).toBeCloseToAbs(1, 0.02);
    expect(r.summary.fwhmY.medianUm! / 0.25).toBeCloseToAbs(1, 0.02);
    expect(r.summary.fwhmZ.medianUm! / 0.7).toBeCloseToAbs(1, 0.03);
    expect(r.summary.fwhmZDirect.medianUm! / 0.7).toBeCloseToAbs(1, 0.05);
    expect(r.summary.fwhm3dX.medianUm! / 0.25).toBeCloseToAbs(1, 0.02);
    expect(r.summary.fwhm3dZ.medianUm! / 0.7).toBeCloseToAbs(1, 0.03);
    expect(r.summary.medianLateralAsymmetry!).toBeGreaterThan(0.95);
    expect(Math.abs(r.summary.medianAxialAsymmetry!)).toBeLessThan(0.03);
    expect(r.summary.medianDriftUmPerUm!).toBeLessThan(0.05);
    for (const b of r.beads) {
      const t = beads.reduce((best, x) =>
        Math.hypot(x.x - b.xPx, x.y - b.yPx, x.z - b.zPx) <
        Math.hypot(best.x - b.xPx, best.y - b.yPx, best.z - b.zPx)
          ? x
          : best,
      );
      // Source: computed here — centre errors well below a voxel at these SNRs.
      expect(Math.abs(t.x - b.xPx) * VOXEL.x).toBeLessThan(0.02);
      expect(Math.abs(t.z - b.zPx) * VOXEL.z).toBeLessThan(0.05);
      expect(b.amplitude! / t.amplitude).toBeCloseToAbs(1, 0.06);
      // Source: computed here — the offset SE of two 16-point lateral fits at σ ≈ 10 counts is ≈ 2.5; allow 3 SE.
      expect(b.background!).toBeCloseToAbs(100, 8);
      expect(b.fwhmXUncertaintyUm!).toBeGreaterThan(0);
      expect(b.r2!).toBeGreaterThan(0.9);
      expect(b.fitConverged.x && b.fitConverged.y && b.fitConverged.z).toBe(true);
    }
  });

  it("reports the bead-size correction only where applicable", () => {
    // Source: METHODS.md §7 — 100 nm solid bead: 52.65 nm < 0.5·250 nm → corrected laterally and axially.
    expect(r.summary.beadSizeCorrection.beadFwhmUm!).toBeCloseToAbs(0.05265, 1e-9);
    expect(r.summary.fwhmX.medianCorrectedUm!).toBeCloseToAbs(
      Math.sqrt(r.summary.fwhmX.medianUm! ** 2 - 0.05265 ** 2),
      1e-12,
    );
    expect(r.summary.beadSizeCorrection.appliedLateral).toBe(true);
  });

  it("builds the averaged PSF from the included beads", () => {
    const a = r.averagedPsf!;
    expect(a.beadCount).toBe(beads.length);
    expect(a.data).toBeInstanceOf(Float32Array);
    expect(a.data.length).toBe(a.shape[0] * a.shape[1] * a.shape[2]);
    // Source: computed here — cubic-convolution registration of 12 Gaussian beads (FWHM 0.25 / 0.7 µm) keeps
    // the averaged widths within 2 % / 3 % of the truth.
    expect(a.fwhmXUm! / 0.25).toBeCloseToAbs(1, 0.02);
    expect(a.fwhmYUm! / 0.25).toBeCloseToAbs(1, 0.02);
    expect(a.fwhmZUm! / 0.7).toBeCloseToAbs(1, 0.03);
    // Peak of the amplitude-normalised mean sits at the centre voxel and is ≈ 1.
    const c =
      a.data[
        ((a.shape[0] - 1) / 2) * a.shape[1] * a.shape[2] +
          ((a.shape[1] - 1) / 2) * a.shape[2] +
          (a.shape[2] - 1) / 2
      ];
    expect(c).toBeCloseToAbs(1, 0.05);
  });

  it("echoes provenance, reports progress in order, is serialisable and leaves its inputs untouched", () => {
    expect(r.provenance.engineVersion).toBe(ENGINE_VERSION);
    expect(r.provenance.parameters.thresholdK).toBe(6);
    expect(r.provenance.parameters.nominalToActualDepth).toBe("identity");
    expect(r.provenance.stack.voxelSizeUm).toEqual(VOXEL);
    const order = stages.map((s) => s[0]);
    expect(order[0]).toBe("detecting");
    expect(order.indexOf("fitting")).toBeGreaterThan(order.lastIndexOf("detecting"));
    expect(order.indexOf("aggregating")).toBeGreaterThan(order.lastIndexOf("fitting"));
    expect(stages.every(([, f]) => f >= 0 && f <= 1)).toBe(true);
    expect(stages[stages.length - 1]).toEqual(["aggregating", 1]);
    const json = JSON.parse(JSON.stringify({ ...r, averagedPsf: null }));
    expect(json.beads).toEqual(r.beads);
    let same = stack.data.length === copy.length;
    for (let i = 0; same && i < copy.length; i++) same = stack.data[i] === copy[i];
    expect(same).toBe(true);
    expect(options).toEqual(optionsCopy);
  });

  it("field dependence: central vs full statistics and a flat best-focus surface", () => {
    expect(r.field.full.count).toBe(beads.length);
    expect(r.field.central.count).toBeLessThanOrEqual(r.field.full.count);
    expect(r.field.fieldRadiusUm).toBeCloseToAbs(Math.hypot(64 * VOXEL.x, 64 * VOXEL.y), 1e-9);
  });
});

describe("analyzeStack — depth", () => {
  const shape: [number, number, number] = [80, 96, 96];
  const beads: SyntheticBead[] = [
    { x: 30, y: 30, z: 20, amplitude: 1500 },
    { x: 65, y: 30, z: 40, amplitude: 1500 },
    { x: 30, y: 65, z: 60, amplitude: 1500 },
  ];
  const stack = makeSyntheticStack({ shape, voxelSizeUm: VOXEL, beads, fwhmUm: FWHM, seed: 5 });
  it("uses the user coverslip slice, the injected nominal→actual mapping and keeps both depths", () => {
    const r = analyzeStack(stack, {
      expectedFwhmUm: FWHM,
      coverslipSlice: 10,
      nominalToActualDepth: (d) => 0.8 * d,
    });
    const b = r.beads.find((x) => Math.abs(x.zPx - 40) < 1)!;
    // Source: computed here — apparent = (40 − 10)·0.1 µm = 3 µm; actual = 0.8 × 3 µm.
    expect(b.apparentDepthUm).toBeCloseToAbs(3, 0.02);
    expect(b.depthUm).toBeCloseToAbs(2.4, 0.02);
    expect(r.provenance.stack.coverslipSource).toBe("user");
    expect(r.provenance.parameters.nominalToActualDepth).toBe("injected");
  });
  it("estimates the coverslip from the shallowest beads and flips with the z direction", () => {
    const r = analyzeStack(stack, { expectedFwhmUm: FWHM, coverslipPercentile: 0 });
    expect(r.provenance.stack.coverslipSource).toBe("estimated");
    expect(r.provenance.stack.coverslipSlice).toBeCloseToAbs(20, 0.2);
    const f = analyzeStack(stack, {
      expectedFwhmUm: FWHM,
      coverslipPercentile: 0,
      intoSampleIsIncreasingZ: false,
    });
    expect(f.provenance.stack.coverslipSlice).toBeCloseToAbs(60, 0.2);
    const deep = f.beads.find((x) => Math.abs(x.zPx - 20) < 1)!;
    expect(deep.apparentDepthUm).toBeCloseToAbs(4, 0.03);
  });
});

describe("analyzeStack — edge cases (STYLE C8)", () => {
  const base = { expectedFwhmUm: FWHM };
  it("throws named errors for bad input", () => {
    const ok = makeSyntheticStack({ shape: [5, 16, 16], voxelSizeUm: VOXEL, beads: [] });
    expect(() => analyzeStack({ ...ok, data: new Uint16Array(0), shape: [0, 16, 16] }, base)).toThrow(
      RangeError,
    );
    expect(() => analyzeStack({ ...ok, data: new Uint16Array(0), shape: [0, 16, 16] }, base)).toThrow(
      /stack is empty/,
    );
    expect(() => analyzeStack({ ...ok, data: new Uint16Array(256), shape: [1, 16, 16] }, base)).toThrow(
      /stack.shape\[0\] \(slices\) must be ≥ 3 for axial measurement; got 1/,
    );
    expect(() => analyzeStack({ ...ok, voxelSizeUm: null }, base)).toThrow(TypeError);
    expect(() => analyzeStack({ ...ok, voxelSizeUm: null }, base)).toThrow(/stack.voxelSizeUm is required/);
    expect(() => analyzeStack({ ...ok, voxelSizeUm: { x: 0.1, y: 0, z: 0.2 } }, base)).toThrow(
      /voxelSizeUm.y must be a positive number of µm; got 0/,
    );
    expect(() => analyzeStack({ ...ok, shape: [5, 16, 15] }, base)).toThrow(
      /does not match stack.data.length/,
    );
    expect(() => analyzeStack(ok, {} as never)).toThrow(
      /options.expectedFwhmUm \{ lateral, axial \} \(µm\) is required/,
    );
    expect(() => analyzeStack(ok, { expectedFwhmUm: { lateral: -1, axial: 0.7 } })).toThrow(
      /expectedFwhmUm.lateral must be > 0 µm; got -1/,
    );
    expect(() => analyzeStack(ok, { ...base, thresholdK: 0 })).toThrow(
      /options.thresholdK must be > 0; got 0/,
    );
    expect(() => analyzeStack(ok, { ...base, coverslipSlice: 9 })).toThrow(
      /options.coverslipSlice must be in \[0, 4\]; got 9/,
    );
    expect(() => analyzeStack(ok, { ...base, aggregateFactor: 1 })).toThrow(/aggregateFactor must be > 1/);
    expect(() => analyzeStack(ok, { ...base, r2Floor: 1 })).toThrow(/r2Floor must be in \[0, 1\)/);
    expect(() => analyzeStack(ok, { ...base, nominalToActualDepth: 3 as never })).toThrow(
      /nominalToActualDepth must be a function/,
    );
  });

  it("a constant image gives no beads and null statistics, without throwing", () => {
    const s: Stack = {
      data: new Uint16Array(10 * 32 * 32).fill(500),
      shape: [10, 32, 32],
      dtype: "uint16",
      voxelSizeUm: VOXEL,
    };
    const r = analyzeStack(s, base);
    expect(r.beads).toEqual([]);
    expect(r.summary.used).toBe(0);
    expect(r.summary.fwhmX.medianUm).toBeNull();
    expect(r.averagedPsf).toBeNull();
    expect(r.depthProfile).toEqual([]);
    expect(r.trend.fwhmX.slope).toBeNull();
  });

  it("three slices vs many: a thin stack is analysed but its beads are axial-edge rejected", () => {
    const s = makeSyntheticStack({
      shape: [3, 64, 64],
      voxelSizeUm: VOXEL,
      beads: [{ x: 32, y: 32, z: 1, amplitude: 1500 }],
      fwhmUm: FWHM,
    });
    const r = analyzeStack(s, base);
    expect(r.beads.length).toBe(1);
    expect(r.beads[0].rejectReason).toBe("edge");
    expect(r.summary.used).toBe(0);
  });

  it("a peak touching the border is kept and rejected as edge", () => {
    const s = makeSyntheticStack({
      shape: [60, 64, 64],
      voxelSizeUm: VOXEL,
      beads: [
        { x: 0, y: 30, z: 30, amplitude: 1500 },
        { x: 32, y: 32, z: 30, amplitude: 1500 },
      ],
      fwhmUm: FWHM,
    });
    const r = analyzeStack(s, base);
    const edge = r.beads.find((b) => b.xPx < 5)!;
    expect(edge.rejectReason).toBe("edge");
    expect(edge.included).toBe(false);
    expect(edge.fwhmXUm).toBeNull();
    expect(r.beads.find((b) => Math.abs(b.xPx - 32) < 2)!.included).toBe(true);
  });

  it("a saturated bead is rejected as saturated (dtype maximum), a flat-topped peak once and saturated at a user ceiling", () => {
    const s = makeSyntheticStack({
      shape: [60, 96, 96],
      voxelSizeUm: VOXEL,
      beads: [
        { x: 30, y: 30, z: 30, amplitude: 200000 },
        { x: 65, y: 65, z: 30, amplitude: 1500 },
      ],
      fwhmUm: FWHM,
    });
    const r = analyzeStack(s, base);
    expect(r.beads.find((b) => Math.abs(b.xPx - 30) < 2)!.rejectReason).toBe("saturated");
    // Flat top: clip a float32 render at 800 counts and declare that the ceiling.
    const f = makeSyntheticStack({
      shape: [60, 96, 96],
      voxelSizeUm: VOXEL,
      beads: [{ x: 48.3, y: 47.6, z: 30.2, amplitude: 3000 }],
      fwhmUm: FWHM,
      dtype: "float32",
    });
    const clipped = Float32Array.from(f.data, (v) => Math.min(v, 800));
    const rf = analyzeStack({ ...f, data: clipped }, { ...base, saturationCeiling: 800 });
    expect(rf.beads.length).toBe(1);
    expect(rf.beads[0].rejectReason).toBe("saturated");
    expect(Math.abs(rf.beads[0].xPx - 48.3)).toBeLessThan(1);
  });

  it("two beads closer than the minimum separation give one detection, not included", () => {
    const shape: [number, number, number] = [60, 128, 128];
    const singles: SyntheticBead[] = [
      [25, 25],
      [100, 25],
      [25, 100],
      [100, 100],
      [62, 25],
    ].map(([x, y]) => ({ x, y, z: 30, amplitude: 1200 }));
    // 0.2 µm apart (< merge distance 2 × 0.25 µm): an unresolved doublet with twice the integrated intensity.
    const pair: SyntheticBead[] = [
      { x: 62, y: 64, z: 30, amplitude: 1200 },
      { x: 62 + 0.2 / VOXEL.x, y: 64, z: 30, amplitude: 1200 },
    ];
    const s = makeSyntheticStack({
      shape,
      voxelSizeUm: VOXEL,
      beads: [...singles, ...pair],
      fwhmUm: FWHM,
      seed: 2,
    });
    const r = analyzeStack(s, base);
    const near = r.beads.filter((b) => Math.hypot(b.xPx - 63.5, b.yPx - 64) < 8);
    expect(near.length).toBe(1);
    expect(near[0].included).toBe(false);
    // Source: METHODS.md §8 — a doublet sums to ≈ 2× the singles' integrated intensity (> 1.8 × median → aggregate).
    expect(near[0].rejectReasons).toContain("aggregate");
    expect(r.summary.used).toBe(5);
  });

  it("non-isotropic voxels: widths in µm are recovered", () => {
    const vs = { x: 0.05, y: 0.08, z: 0.2 };
    const beads = [
      [30, 20],
      [70, 20],
      [30, 45],
      [70, 45],
    ].map(([x, y]) => ({ x, y, z: 20, amplitude: 2000 }));
    const s = makeSyntheticStack({
      shape: [40, 64, 100],
      voxelSizeUm: vs,
      beads,
      fwhmUm: { lateral: 0.3, axial: 0.9 },
      seed: 6,
    });
    const r = analyzeStack(s, { expectedFwhmUm: { lateral: 0.3, axial: 0.9 } });
    expect(r.summary.used).toBe(4);
    // Source: computed here (Gaussian PSF 0.3 / 0.9 µm).
    expect(r.summary.fwhmX.medianUm! / 0.3).toBeCloseToAbs(1, 0.03);
    expect(r.summary.fwhmY.medianUm! / 0.3).toBeCloseToAbs(1, 0.03);
    expect(r.summary.fwhmZ.medianUm! / 0.9).toBeCloseToAbs(1, 0.03);
  });
});

describe("include/exclude toggles", () => {
  const shape: [number, number, number] = [60, 96, 96];
  const beads = [
    [25, 25],
    [70, 25],
    [25, 70],
    [70, 70],
  ].map(([x, y]) => ({ x, y, z: 30, amplitude: 1500 }));
  const s = makeSyntheticStack({ shape, voxelSizeUm: VOXEL, beads, fwhmUm: FWHM, seed: 8 });
  it("excludedBeadIds and includedOverrides are applied by analyzeStack and recomputeSummary without refitting", () => {
    const r = analyzeStack(s, { expectedFwhmUm: FWHM, excludedBeadIds: [1] });
    expect(r.summary.used).toBe(3);
    expect(r.summary.rejectedByReason.user_excluded).toBe(1);
    expect(r.beads[0].rejectReason).toBeNull();
    const back = recomputeSummary(r.beads, { includedOverrides: { 1: true } });
    expect(back.summary.used).toBe(4);
    expect(back.beads[0].included).toBe(true);
    expect(r.beads[0].included).toBe(false); // input not mutated
    const fewer = recomputeSummary(r.beads, { excludedBeadIds: [1, 2] });
    expect(fewer.summary.used).toBe(2);
    expect(fewer.field).toBeNull();
  });
});
