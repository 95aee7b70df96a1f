/**
 * Files from an independent writer: tifffile (python3-tifffile, Debian), which many microscopy
 * pipelines use to save ImageJ hyperstacks and OME-TIFF. fixtures/tifffile/make_fixtures.py drew the
 * beads as analytic Gaussians with numpy and recorded checksums and the truth in manifest.json.
 */
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { runMeasurementPipeline } from "@/lib/psf/run-measurement-pipeline";
import { readTiffStack } from "@/lib/tiff";

interface Checksum {
  sum: number;
  probes: Array<{ z: number; y: number; x: number; value: number }>;
}
interface Entry {
  file: string;
  format: string;
  dtype: string;
  channels: number;
  slices: number;
  height: number;
  width: number;
  voxelSizeUm: { x: number; y: number; z: number };
  checksums: Checksum[];
  channelShiftXUm?: number;
}
const dir = join(__dirname, "../../../../fixtures/tifffile");
const manifest = JSON.parse(readFileSync(join(dir, "manifest.json"), "utf8")) as {
  truth: { fwhmUm: { x: number; y: number; z: number } };
  files: Entry[];
};

describe("stacks written by tifffile", () => {
  it.each(manifest.files.map((e) => [e.file, e] as const))(
    "%s: shape, type, voxel size and every channel's pixels",
    async (_name, e) => {
      const bytes = readFileSync(join(dir, e.file));
      for (let c = 0; c < e.channels; c++) {
        const { stack, metadata } = await readTiffStack(bytes, { channel: c });
        expect(metadata.format).toBe(e.format);
        expect(metadata.channels.value).toBe(e.channels);
        expect(stack.dtype).toBe(e.dtype);
        expect(stack.shape).toEqual([e.slices, e.height, e.width]);
        expect(stack.voxelSizeUm!.x).toBeCloseToAbs(e.voxelSizeUm.x, 1e-6);
        expect(stack.voxelSizeUm!.y).toBeCloseToAbs(e.voxelSizeUm.y, 1e-6);
        expect(stack.voxelSizeUm!.z).toBeCloseToAbs(e.voxelSizeUm.z, 1e-6);
        let sum = 0;
        for (let i = 0; i < stack.data.length; i++) sum += stack.data[i]!;
        const truth = e.checksums[c]!;
        // float32 sums differ from numpy's float64 sum only by rounding.
        expect(Math.abs(sum - truth.sum) / truth.sum).toBeLessThan(1e-6);
        for (const p of truth.probes) {
          const v = stack.data[(p.z * e.height + p.y) * e.width + p.x]!;
          expect(v).toBeCloseTo(p.value, 3);
        }
      }
    },
  );

  it.each(manifest.files.map((e) => [e.file, e] as const))(
    "%s: the measured FWHM is the drawn Gaussian's",
    async (_name, e) => {
      const result = await runMeasurementPipeline(readFileSync(join(dir, e.file)), {
        channel: 0,
        modality: "widefield",
        na: 1.4,
        immersionRi: 1.518,
        sampleRi: 1.518,
        emissionWavelengthNm: 520,
      });
      const s = result.analysis.summary;
      expect(s.used).toBe(4);
      // Source: FWHM = 2·√(2 ln 2)·σ of a Gaussian (any statistics handbook); σ from the manifest.
      // 8-bit quantisation and σ_noise = 5 counts allow 2 %; the 16-bit and float files 1 %.
      const tol = e.dtype === "uint8" ? 0.02 : 0.01;
      expect(Math.abs(s.fwhmX.medianUm! / manifest.truth.fwhmUm.x - 1)).toBeLessThan(tol);
      expect(Math.abs(s.fwhmY.medianUm! / manifest.truth.fwhmUm.y - 1)).toBeLessThan(tol);
      expect(Math.abs(s.fwhmZ.medianUm! / manifest.truth.fwhmUm.z - 1)).toBeLessThan(tol);
      if (e.channelShiftXUm !== undefined) {
        // Channel 2 was drawn shifted in x by a known amount: co-registration must read it back.
        const co = result.coregistration?.[0];
        expect(co?.pairCount).toBe(4);
        expect(co!.medianDxUm!).toBeCloseToAbs(e.channelShiftXUm, 0.01);
      }
    },
  );
});
