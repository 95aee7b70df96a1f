import { describe, expect, it } from "vitest";
import { makeSyntheticStack } from "../../../../fixtures/synthetic-stack";
import { detectBeads, estimateBackground, gaussianKernel } from "../../../../src/lib/psf";

const VOXEL = { x: 0.065, y: 0.065, z: 0.1 };

describe("detectBeads", () => {
  it("finds no maxima in pure noise, including at the borders (edge-corrected threshold)", () => {
    const s = makeSyntheticStack({ shape: [40, 96, 96], voxelSizeUm: VOXEL, beads: [], seed: 31 });
    const bg = estimateBackground(s);
    const d = detectBeads(s, {
      background: bg.median,
      noiseSigma: bg.noiseSigma,
      smoothingSigmaPx: { x: 0.8, y: 0.8, z: 1 },
      minSeparationUm: { lateral: 0.5, axial: 2.8 },
    });
    // Source: computed here — a 6σ threshold on 369k smoothed voxels expects ≪ 1 false maximum.
    expect(d.peaks).toEqual([]);
    expect(d.threshold).toBeGreaterThan(bg.median);
  });

  it("refines centres to sub-voxel precision and merges maxima closer than the minimum separation", () => {
    const beads = [
      { x: 30.3, y: 40.7, z: 20.4, amplitude: 2000 },
      { x: 70.6, y: 50.2, z: 25.8, amplitude: 1500 },
    ];
    const s = makeSyntheticStack({
      shape: [50, 96, 96],
      voxelSizeUm: VOXEL,
      beads,
      fwhmUm: { lateral: 0.25, axial: 0.7 },
      seed: 2,
    });
    const bg = estimateBackground(s);
    const d = detectBeads(s, {
      background: bg.median,
      noiseSigma: bg.noiseSigma,
      smoothingSigmaPx: { x: 0.8, y: 0.8, z: 1 },
      minSeparationUm: { lateral: 0.5, axial: 2.8 },
    });
    expect(d.peaks.length).toBe(2);
    // Sorted by height; parabolic refinement on the smoothed image is within ≈ 0.3 voxel.
    expect(d.peaks[0].x).toBeCloseToAbs(30.3, 0.3);
    expect(d.peaks[0].y).toBeCloseToAbs(40.7, 0.3);
    expect(d.peaks[0].z).toBeCloseToAbs(20.4, 0.3);
    expect(d.peaks[1].x).toBeCloseToAbs(70.6, 0.3);
    const big = detectBeads(s, {
      background: bg.median,
      noiseSigma: bg.noiseSigma,
      smoothingSigmaPx: { x: 0.8, y: 0.8, z: 1 },
      minSeparationUm: { lateral: 5, axial: 5 },
    });
    expect(big.peaks.length).toBe(1);
    expect(big.merged).toBe(1);
  });

  it("gaussianKernel is normalised and validates sigma", () => {
    const k = gaussianKernel(1.3);
    expect(k.reduce((a, b) => a + b, 0)).toBeCloseToAbs(1, 1e-6);
    expect(gaussianKernel(0)).toEqual(Float32Array.of(1));
    expect(() => gaussianKernel(-1)).toThrow(/sigma must be ≥ 0; got -1/);
  });
});
