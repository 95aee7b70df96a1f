import { execFileSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fromArrayBuffer } from "geotiff";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import {
  readManifest,
  sampleStack,
  SAMPLE_SHAPE,
  SAMPLE_VOXEL_UM,
  writeFixtureSet,
  type FixtureEntry,
} from "../../../../fixtures/fixture-set";
import { decodeDeflate, inspectTiff, readTiffStack, type StackData } from "../../../../src/lib/tiff";

function tiffcpAvailable(): boolean {
  try {
    execFileSync("which", ["tiffcp"], { stdio: "pipe" });
    return true;
  } catch {
    return false;
  }
}

function mismatches(a: StackData, b: StackData): number {
  if (a.length !== b.length) return Math.max(a.length, b.length);
  let bad = 0;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) bad++;
  return bad;
}

const committedDir = join(__dirname, "../../../../fixtures/samples");
let tempDir = "";
let generated: FixtureEntry[] = [];

beforeAll(() => {
  // Tests with compressed variants need libtiff's tiffcp; CI installs libtiff-tools. Fail loudly.
  if (!tiffcpAvailable()) throw new Error("tiffcp not found: install the Debian package libtiff-tools");
  tempDir = mkdtempSync(join(tmpdir(), "beadbench-tiff-"));
  generated = writeFixtureSet(tempDir);
});
afterAll(() => {
  if (tempDir) rmSync(tempDir, { recursive: true, force: true });
});

describe("readTiffStack — every flavour against the generator's truth", () => {
  it("generates at least 30 flavours, 13 of them by tiffcp", () => {
    expect(generated.length).toBeGreaterThanOrEqual(30);
    expect(generated.filter((e) => e.writer === "tiffcp").length).toBe(13);
  });

  it("reads each generated flavour voxel-for-voxel, every channel and frame, with the right voxel size", async () => {
    for (const entry of generated) {
      const bytes = readFileSync(join(tempDir, entry.file));
      for (let c = 0; c < entry.channels; c++) {
        for (let t = 0; t < entry.frames; t++) {
          const { stack, metadata } = await readTiffStack(bytes, { channel: c, frame: t });
          const truth = sampleStack(entry.dtype, c, t).stack;
          expect(stack.shape, entry.file).toEqual(SAMPLE_SHAPE);
          expect(stack.dtype, entry.file).toBe(entry.dtype);
          expect(mismatches(stack.data, truth.data), `${entry.file} c=${c} t=${t}`).toBe(0);
          expect(metadata.format, entry.file).toBe(entry.format);
          if (entry.voxelSizeUm === null) {
            expect(stack.voxelSizeUm, entry.file).toBeNull();
          } else {
            expect(stack.voxelSizeUm, entry.file).not.toBeNull();
            expect(stack.voxelSizeUm!.x).toBeCloseToAbs(entry.voxelSizeUm.x, 1e-6);
            expect(stack.voxelSizeUm!.y).toBeCloseToAbs(entry.voxelSizeUm.y, 1e-6);
            expect(stack.voxelSizeUm!.z).toBeCloseToAbs(entry.voxelSizeUm.z, 1e-6);
          }
        }
      }
    }
  });

  it("reports the compression, predictor, tiling, byte order and BigTIFF flag tiffcp wrote", async () => {
    const byName = (n: string) => generated.find((e) => e.file === `${n}.tif`)!;
    const meta = async (n: string) => inspectTiff(readFileSync(join(tempDir, byName(n).file)));
    expect((await meta("tiffcp-u16-lzw-pred")).compression).toBe("lzw");
    expect((await meta("tiffcp-u16-lzw-pred")).predictor).toBe(2);
    expect((await meta("tiffcp-u16-zip")).compression).toBe("deflate");
    expect((await meta("tiffcp-u16-packbits")).compression).toBe("packbits");
    expect((await meta("tiffcp-f32-zip-fpred")).predictor).toBe(3);
    const t = await meta("tiffcp-u16-zip-be-bigtiff-tiles");
    expect([t.tiled, t.bigTiff, t.byteOrder]).toEqual([true, true, "big-endian"]);
  });

  it("reads every committed sample in fixtures/samples and matches the manifest", async () => {
    const entries = readManifest(committedDir);
    expect(entries.length).toBeGreaterThanOrEqual(30);
    for (const entry of entries) {
      const { stack } = await readTiffStack(readFileSync(join(committedDir, entry.file)));
      expect(mismatches(stack.data, sampleStack(entry.dtype, 0, 0).stack.data), entry.file).toBe(0);
    }
  });

  it("agrees with plain geotiff readRasters on tiffcp files (independent decoder cross-check)", async () => {
    for (const name of [
      "tiffcp-u16-lzw-pred",
      "tiffcp-u16-zip-pred-tiles",
      "tiffcp-u16-packbits",
      "tiffcp-f32-zip-fpred",
    ]) {
      const bytes = readFileSync(join(tempDir, `${name}.tif`));
      const { stack } = await readTiffStack(bytes);
      const tiff = await fromArrayBuffer(
        bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength),
      );
      const plane = SAMPLE_SHAPE[1] * SAMPLE_SHAPE[2];
      for (const z of [0, 7, 15]) {
        const raster = (await (
          await tiff.getImage(z)
        ).readRasters({ interleave: true })) as unknown as ArrayLike<number>;
        let bad = 0;
        for (let i = 0; i < plane; i++) if (raster[i] !== stack.data[z * plane + i]) bad++;
        expect(bad, `${name} z=${z}`).toBe(0);
      }
    }
  });
});

describe("readTiffStack — channel and frame selection", () => {
  const file = (n: string) => readFileSync(join(committedDir, `${n}.tif`));

  it("ImageJ hyperstack: channels fastest, then slices, then frames", async () => {
    // Source: ImageJ description keys (QC-PRACTICE.md §5.2), hyperstack order from memory.
    const bytes = file("own-imagej-c2-t2");
    const meta = await inspectTiff(bytes);
    expect([meta.channels.value, meta.slices.value, meta.frames.value]).toEqual([2, SAMPLE_SHAPE[0], 2]);
    expect(meta.channels.source).toBe("imagej");
    expect(meta.dimensionOrder.value).toBe("XYCZT");
    const { stack } = await readTiffStack(bytes, { channel: 1, frame: 1 });
    expect(mismatches(stack.data, sampleStack("uint16", 1, 1).stack.data)).toBe(0);
    expect(mismatches(stack.data, sampleStack("uint16", 0, 1).stack.data)).toBeGreaterThan(0);
  });

  it("OME-TIFF with DimensionOrder XYZCT, XYCZT, XYZTC and explicit TiffData all map planes right", async () => {
    // Source: OME data model schema 2016-06 (Pixels@DimensionOrder, TiffData@IFD/FirstZ/FirstC/PlaneCount).
    for (const name of ["own-ome-xyzct", "own-ome-xyczt", "own-ome-xyztc", "own-ome-tiffdata"]) {
      const bytes = file(name);
      const frames = name === "own-ome-tiffdata" ? 1 : 2;
      for (let c = 0; c < 2; c++)
        for (let t = 0; t < frames; t++) {
          const { stack, metadata } = await readTiffStack(bytes, { channel: c, frame: t });
          expect(metadata.channels).toEqual({ value: 2, source: "ome-xml" });
          expect(
            mismatches(stack.data, sampleStack("uint16", c, t).stack.data),
            `${name} c=${c} t=${t}`,
          ).toBe(0);
        }
    }
  });

  it("refuses a channel or frame the file does not have", async () => {
    await expect(readTiffStack(file("own-imagej-c2-t2"), { channel: 2 })).rejects.toMatchObject({
      code: "bad_option",
    });
    await expect(readTiffStack(file("own-imagej-c2-t2"), { frame: 5 })).rejects.toMatchObject({
      code: "bad_option",
    });
    await expect(readTiffStack(file("own-u16-plain"), { channel: 1 })).rejects.toMatchObject({
      code: "bad_option",
    });
  });

  it("uses an injected inflate for Deflate strips and maps its failures to corrupt_data", async () => {
    const bytes = file("tiffcp-u16-zip-pred");
    let calls = 0;
    const counting = (src: Uint8Array, out: Uint8Array) => {
      calls++;
      return decodeDeflate(src, out);
    };
    const { stack } = await readTiffStack(bytes, { inflate: counting });
    expect(calls).toBeGreaterThan(0);
    expect(mismatches(stack.data, sampleStack("uint16").stack.data)).toBe(0);
    const failing = () => {
      throw new Error("boom");
    };
    await expect(readTiffStack(bytes, { inflate: failing })).rejects.toMatchObject({ code: "corrupt_data" });
  });

  it("does not modify its input", async () => {
    const bytes = file("tiffcp-u16-lzw-pred-be");
    const copy = bytes.slice();
    await readTiffStack(bytes);
    expect(Buffer.compare(bytes, copy)).toBe(0);
  });

  it("accepts an ArrayBuffer as well as a Uint8Array view with an offset", async () => {
    const bytes = file("own-u16-le-classic-strips");
    const padded = new Uint8Array(bytes.length + 3);
    padded.set(bytes, 3);
    const a = await readTiffStack(padded.subarray(3));
    const b = await readTiffStack(padded.slice(3).buffer);
    expect(mismatches(a.stack.data, b.stack.data)).toBe(0);
    expect(a.stack.voxelSizeUm).toEqual(SAMPLE_VOXEL_UM);
  });
});
