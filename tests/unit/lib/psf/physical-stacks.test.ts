/**
 * Accuracy on physically based stacks: beads rendered with the Gibson–Lanni PSF of src/lib/optics
 * (matched oil and oil → water mismatch) through fixtures/synthetic-stack.ts, with shot + read noise.
 * Targets (issue 4): recall ≥ 95 %, precision ≥ 98 %, median |FWHM error| vs the noise-free render's
 * fitted FWHM ≤ 2 % lateral and ≤ 3 % axial at peak SNR ≥ 20; crowded, saturated and edge beads rejected
 * with the right reason.
 */
import { describe, expect, it } from "vitest";
import { makeRng, makeSyntheticStack, type SyntheticBead } from "../../../../fixtures/synthetic-stack";
import {
  analyzeStack,
  measureBead,
  median,
  resolveAnalyzeOptions,
  type AnalyzeStackResult,
} from "../../../../src/lib/psf";
import { makeGibsonLanniLut } from "../../../../fixtures/gibson-lanni-lut";

const VOXEL = { x: 0.065, y: 0.065, z: 0.1 };
const SHAPE: [number, number, number] = [90, 224, 224];
const BACKGROUND = 100;
const READ_NOISE = 2;
// Source: computed here — noise σ at the background is √(100 + 2²) ≈ 10.2 counts, so an amplitude of 250
// is a peak SNR (amplitude / background σ, the engine's `snr`) of ≈ 24.5, ≥ 20 as the issue requires;
// amplitudes are uniform in [250, 2500] (SNR ≈ 25–245).
const AMP_MIN = 250;
const AMP_MAX = 2500;

function gridBeads(seed: number): SyntheticBead[] {
  const rng = makeRng(seed);
  const out: SyntheticBead[] = [];
  // 2.2 µm lateral pitch (> 3 lateral FWHM of ≈ 0.2 µm, the exclusion distance), margins ≥ 1 µm from the edges.
  const pitchPx = Math.round(2.2 / VOXEL.x);
  for (let gy = 0; gy < 6; gy++)
    for (let gx = 0; gx < 6; gx++) {
      out.push({
        x: 20 + gx * pitchPx + (rng() - 0.5) * 6,
        y: 20 + gy * pitchPx + (rng() - 0.5) * 6,
        z: 35 + rng() * 25,
        amplitude: AMP_MIN + rng() * (AMP_MAX - AMP_MIN),
      });
    }
  return out;
}

function match(result: AnalyzeStackResult, truth: SyntheticBead[]) {
  const near = (b: { xPx: number; yPx: number; zPx: number }, t: SyntheticBead) =>
    Math.hypot((b.xPx - t.x) * VOXEL.x, (b.yPx - t.y) * VOXEL.y) < 0.3 &&
    Math.abs((b.zPx - t.z) * VOXEL.z) < 1.5;
  const found = truth.filter((t) => result.beads.some((b) => near(b, t))).length;
  const trueDet = result.beads.filter((b) => truth.some((t) => near(b, t))).length;
  return { recall: found / truth.length, precision: trueDet / result.beads.length };
}

function widthErrors(
  stack: ReturnType<typeof makeSyntheticStack>,
  clean: ReturnType<typeof makeSyntheticStack>,
  result: AnalyzeStackResult,
  expected: { lateral: number; axial: number },
) {
  const o = resolveAnalyzeOptions(stack, { expectedFwhmUm: expected });
  const rel = { x: [] as number[], y: [] as number[], z: [] as number[] };
  for (const b of result.beads.filter((x) => x.included)) {
    // Same profiles on the noise-free render: measure at the same (noisy-fit) centre.
    const ref = measureBead(
      clean,
      { x: b.xPx, y: b.yPx, z: b.zPx },
      {
        expectedFwhmUm: expected,
        lateralWindowFwhm: o.lateralWindowFwhm,
        axialWindowFwhm: o.axialWindowFwhm,
        saturationLevel: Infinity,
        stackBackground: BACKGROUND,
        noiseSigma: 1,
        farIsIncreasingZ: true,
        fit3d: false,
        fit3dRotation: false,
        maxIterations1d: 100,
        maxIterations3d: 10,
      },
    );
    rel.x.push(Math.abs(b.fwhmXUm! / ref.fwhmXUm! - 1));
    rel.y.push(Math.abs(b.fwhmYUm! / ref.fwhmYUm! - 1));
    rel.z.push(Math.abs(b.fwhmZUm! / ref.fwhmZUm! - 1));
  }
  return { x: median(rel.x), y: median(rel.y), z: median(rel.z), n: rel.x.length };
}

describe("analyzeStack on Gibson–Lanni stacks", () => {
  const cases = [
    // Source: METHODS.md check values 18–19 (matched NA 1.4 oil, λ 520 nm) and 22–25 (oil NA 1.3 → water at 10 µm).
    {
      name: "matched oil NA 1.4",
      params: { na: 1.4, wavelengthNm: 520, immersionRi: 1.518, sampleRi: 1.518 },
      depth: 0,
      expected: { lateral: 0.19, axial: 0.5 },
    },
    {
      name: "oil NA 1.3 → water, 10 µm",
      params: { na: 1.3, wavelengthNm: 520, immersionRi: 1.518, sampleRi: 1.333 },
      depth: 10,
      expected: { lateral: 0.21, axial: 0.64 },
    },
  ];
  for (const c of cases) {
    it(`${c.name}: recall, precision and width accuracy`, () => {
      const lut = makeGibsonLanniLut(c.params, c.depth, 5, 2);
      const beads = gridBeads(11);
      const common = {
        shape: SHAPE,
        voxelSizeUm: VOXEL,
        beads,
        psf: lut.psf,
        renderRadiusUm: { lateral: 1.6, axial: 4.5 },
        background: BACKGROUND,
      };
      const stack = makeSyntheticStack({ ...common, readNoise: READ_NOISE, seed: 5 });
      const clean = makeSyntheticStack({ ...common, readNoise: 0, shotNoise: false, dtype: "float32" });
      const result = analyzeStack(stack, { expectedFwhmUm: c.expected });
      const m = match(result, beads);
      const e = widthErrors(stack, clean, result, c.expected);
      console.log(c.name, {
        ...m,
        ...e,
        used: result.summary.used,
        rejected: result.summary.rejectedByReason,
        fwhm: [
          result.summary.fwhmX.medianUm,
          result.summary.fwhmY.medianUm,
          result.summary.fwhmZ.medianUm,
          result.summary.fwhmZDirect.medianUm,
        ],
        asym: result.summary.medianAxialAsymmetry,
      });
      // Source: issue 4 accuracy targets (detection and width accuracy at peak SNR ≥ 20).
      expect(m.recall).toBeGreaterThanOrEqual(0.95);
      expect(m.precision).toBeGreaterThanOrEqual(0.98);
      expect(e.n).toBeGreaterThanOrEqual(30);
      expect(e.x).toBeLessThanOrEqual(0.02);
      expect(e.y).toBeLessThanOrEqual(0.02);
      expect(e.z).toBeLessThanOrEqual(0.03);
      if (c.depth > 0) {
        // Source: METHODS.md §8 table — oil NA 1.3 → water at 10 µm: strongest far-side lobe 0.295 of the peak,
        // near side 0.012 (computed there with the GL model), so the side-lobe ratio is ≈ +0.28 on axis.
        // The engine smooths the on-axis profile (3×3 mean, [1 2 1] in z), so we assert a clear positive sign.
        expect(result.summary.medianAxialAsymmetry!).toBeGreaterThan(0.1);
        const flipped = analyzeStack(stack, { expectedFwhmUm: c.expected, intoSampleIsIncreasingZ: false });
        expect(flipped.summary.medianAxialAsymmetry!).toBeLessThan(-0.1);
      } else {
        // Source: METHODS.md §8 table, matched case: symmetric first axial lobes (0.047 / 0.047).
        expect(Math.abs(result.summary.medianAxialAsymmetry!)).toBeLessThan(0.03);
      }
    });
  }

  it("rejects crowded, saturated and edge beads with the right reason (oil → water PSF)", () => {
    const lut = makeGibsonLanniLut(
      { na: 1.3, wavelengthNm: 520, immersionRi: 1.518, sampleRi: 1.333 },
      10,
      5,
      2,
    );
    const beads: SyntheticBead[] = [
      // isolated singles (to define the population median for the aggregate rule)
      ...[40, 80, 120, 160].flatMap((x) => [
        { x, y: 40, z: 45, amplitude: 900 },
        { x, y: 180, z: 45, amplitude: 900 },
      ]),
      // crowded pair: 0.45 µm apart laterally (< 3 × 0.21 µm exclusion, > 2 × 0.21 µm merge distance)
      { x: 100, y: 110, z: 45, amplitude: 900 },
      { x: 107, y: 110, z: 45, amplitude: 800 },
      // saturated bead (uint16 ceiling)
      { x: 40, y: 110, z: 45, amplitude: 90000 },
      // edge bead: centre 3 px from the x border
      { x: 3, y: 120, z: 45, amplitude: 900 },
      // edge bead in z: 5 slices from the first plane (window ±2 axial FWHM = ±13 slices)
      { x: 170, y: 110, z: 5, amplitude: 900 },
    ];
    const stack = makeSyntheticStack({
      shape: SHAPE,
      voxelSizeUm: VOXEL,
      beads,
      psf: lut.psf,
      renderRadiusUm: { lateral: 1.6, axial: 4.5 },
      background: BACKGROUND,
      readNoise: READ_NOISE,
      seed: 9,
    });
    const r = analyzeStack(stack, { expectedFwhmUm: { lateral: 0.21, axial: 0.64 } });
    const at = (x: number, y: number, z: number) =>
      r.beads.find((b) => Math.hypot(b.xPx - x, b.yPx - y) < 5 && Math.abs(b.zPx - z) < 15);
    expect(at(100, 110, 45)?.rejectReason).toBe("neighbour");
    expect(at(107, 110, 45)?.rejectReason).toBe("neighbour");
    expect(at(40, 110, 45)?.rejectReason).toBe("saturated");
    expect(at(3, 120, 45)?.rejectReason).toBe("edge");
    expect(at(170, 110, 5)?.rejectReason).toBe("edge");
    for (const [x, y] of [
      [40, 40],
      [80, 40],
      [120, 40],
      [160, 40],
      [40, 180],
      [80, 180],
      [120, 180],
      [160, 180],
    ])
      expect(at(x, y, 45)?.included).toBe(true);
    // Rejected beads are kept, never dropped.
    expect(r.summary.found).toBe(r.beads.length);
    expect(r.summary.rejected).toBe(r.beads.filter((b) => !b.included).length);
  });
});

describe("depth series with the optics module's nominal → actual depth", () => {
  it("recovers actual depth, and the axial width and far-side asymmetry grow with depth (oil NA 1.3 → water)", async () => {
    const { makeNominalToActualDepth } = await import("../../../../src/lib/optics");
    const params = { na: 1.3, wavelengthNm: 520, immersionRi: 1.518, sampleRi: 1.333 };
    const vz = 0.2;
    const coverslipSlice = 10;
    const depths = [1, 5, 10, 15];
    const luts = depths.map((d) => makeGibsonLanniLut(params, d, 6, 2));
    const beads: SyntheticBead[] = [];
    const lutByZ = new Map<number, (typeof luts)[number]>();
    depths.forEach((d, k) => {
      const z = coverslipSlice + luts[k].peakNominalUm / vz;
      lutByZ.set(z, luts[k]);
      for (let i = 0; i < 4; i++) beads.push({ x: 20 + i * 34, y: 20 + k * 34, z, amplitude: 1500 });
    });
    const voxel = { x: 0.065, y: 0.065, z: vz };
    const stack = makeSyntheticStack({
      shape: [130, 160, 160],
      voxelSizeUm: voxel,
      beads,
      psf: (dx, dy, dz, b) => lutByZ.get(b.z)!.psf(dx, dy, dz, b),
      renderRadiusUm: { lateral: 1.6, axial: 5.5 },
      background: BACKGROUND,
      readNoise: READ_NOISE,
      seed: 12,
    });
    const conv = makeNominalToActualDepth(params, { maxDepthUm: 30 });
    const r = analyzeStack(stack, {
      expectedFwhmUm: { lateral: 0.21, axial: 0.64 },
      coverslipSlice,
      nominalToActualDepth: conv.toActualUm,
      minBeadsPerBin: 4,
    });
    expect(r.summary.used).toBe(16);
    for (const d of depths) {
      const group = r.beads.filter((b) => Math.abs(b.depthUm - d) < 1);
      // Source: computed here — the GL focal shift inverted by the optics module; bead centres from the 1D axial
      // fit of the central lobe sit within a fraction of a z-step of the GL intensity maximum.
      expect(group.length).toBe(4);
      expect(Math.abs(median(group.map((b) => b.depthUm)) - d)).toBeLessThan(0.15);
      expect(median(group.map((b) => b.apparentDepthUm))).toBeGreaterThan(d); // nominal travel > actual depth for n_s < n_i
    }
    // Source: METHODS.md check value 24 and §8 table — axial FWHM and far-side lobes grow with depth for oil → water.
    expect(r.trend.fwhmZ.slope!).toBeGreaterThan(0);
    expect(r.trend.fwhmZ.slopeLow!).toBeGreaterThan(0);
    expect(r.trend.axialAsymmetry.slope!).toBeGreaterThan(0);
    expect(r.depthProfile.length).toBe(4);
    expect(r.depthProfile[3].fwhmZ.medianUm!).toBeGreaterThan(r.depthProfile[0].fwhmZ.medianUm!);
    // Source: METHODS.md §8 table — far-side lobe 0.295 / near 0.012 at 10 µm (oil NA 1.3 → water, GL, on axis);
    // the engine's smoothed 3×3 on-axis estimate should land near that, and stay physical (< 0.6) at 15 µm.
    expect(r.depthProfile[2].medianAxialAsymmetry!).toBeGreaterThan(0.15);
    expect(r.depthProfile[2].medianAxialAsymmetry!).toBeLessThan(0.35);
    expect(r.depthProfile[3].medianAxialAsymmetry!).toBeLessThan(0.6);
    console.log(
      "depth series",
      r.depthProfile.map((row) => ({
        depth: row.depthMedianUm.toFixed(2),
        fwhmZ: row.fwhmZ.medianUm?.toFixed(3),
        direct: row.fwhmZDirect.medianUm?.toFixed(3),
        asym: row.medianAxialAsymmetry?.toFixed(3),
      })),
    );
  });
});
