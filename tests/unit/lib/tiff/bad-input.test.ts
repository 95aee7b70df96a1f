import { readdirSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { buildBadFiles } from "../../../../fixtures/bad-files";
import { mutationCorpus } from "../../../../fixtures/mutate-tiff";
import { sampleStack } from "../../../../fixtures/fixture-set";
import { stackToPages, writeTiff } from "../../../../fixtures/tiff-writer";
import { inspectTiff, readTiffStack, TiffInputError } from "../../../../src/lib/tiff";

const badDir = join(__dirname, "../../../../fixtures/bad");
const samplesDir = join(__dirname, "../../../../fixtures/samples");

describe("bad files → the right TiffInputError code", () => {
  const manifest = JSON.parse(readFileSync(join(badDir, "manifest.json"), "utf8")) as Array<{
    name: string;
    code: string;
  }>;

  it("the committed set covers every required kind of bad file", () => {
    const names = manifest.map((m) => m.name);
    for (const n of [
      "png-renamed.tif",
      "random-bytes.tif",
      "empty.tif",
      "truncated.tif",
      "corrupt-ifd-offset.tif",
      "looping-ifd.tif",
      "single-page.tif",
      "rgb-page.tif",
      "differing-sizes.tif",
      "huge-declared.tif",
    ]) {
      expect(names).toContain(n);
    }
    expect(
      readdirSync(badDir)
        .filter((f) => f.endsWith(".tif"))
        .sort(),
    ).toEqual([...names].sort());
  });

  it.each(manifest.map((m) => [m.name, m.code]))(
    "%s → %s (readTiffStack and inspectTiff)",
    async (name, code) => {
      const bytes = readFileSync(join(badDir, name));
      await expect(readTiffStack(bytes)).rejects.toMatchObject({ name: "TiffInputError", code });
      await expect(inspectTiff(bytes)).rejects.toBeInstanceOf(TiffInputError);
      await expect(inspectTiff(bytes)).rejects.toMatchObject({ code });
    },
  );

  it("the committed bad files equal what the generator builds (deterministic)", () => {
    for (const f of buildBadFiles())
      expect(Buffer.compare(readFileSync(join(badDir, f.name)), Buffer.from(f.bytes)), f.name).toBe(0);
  });

  it("messages name the numbers", async () => {
    const err = await readTiffStack(readFileSync(join(badDir, "huge-declared.tif"))).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(TiffInputError);
    expect((err as Error).message).toMatch(/100000×100000×10000/);
    expect((err as Error).message).toMatch(/536870912 voxels/);
    const loop = await readTiffStack(readFileSync(join(badDir, "looping-ifd.tif"))).catch((e: unknown) => e);
    expect((loop as Error).message).toMatch(/loops back to byte \d+ after 4 pages/);
  });
});

describe("limits are checked before allocation", () => {
  const bytes = readFileSync(join(samplesDir, "own-u16-le-classic-strips.tif")); // 16 × 48 × 48 uint16

  it("maxVoxels and maxBytes refuse with the declared numbers, from the header alone", async () => {
    // Source: STYLE.md C5 "Limits before allocation"; DESIGN.md §4.1.
    await expect(readTiffStack(bytes, { maxVoxels: 48 * 48 * 16 - 1 })).rejects.toMatchObject({
      code: "too_large",
      details: { voxels: 36864, bytes: 73728, maxVoxels: 36863 },
    });
    await expect(inspectTiff(bytes, { maxBytes: 1000 })).rejects.toMatchObject({
      code: "too_large",
      details: { bytes: 73728, maxBytes: 1000 },
    });
    await expect(readTiffStack(bytes, { maxVoxels: 48 * 48 * 16, maxBytes: 73728 })).resolves.toBeDefined();
  });

  it("a 2e14-byte declaration fails in milliseconds without touching a pixel buffer", async () => {
    const t0 = performance.now();
    const err = await readTiffStack(readFileSync(join(badDir, "huge-declared.tif"))).catch((e: unknown) => e);
    expect(performance.now() - t0).toBeLessThan(500);
    // The plan's message (not the allocation fallback "Could not allocate") proves the check came first.
    expect((err as Error).message).toMatch(/above the limit/);
  });

  it("maxPages caps the IFD chain", async () => {
    await expect(inspectTiff(bytes, { maxPages: 10 })).rejects.toMatchObject({
      code: "too_large",
      details: { maxPages: 10 },
    });
  });

  it("minSlices: a 2-page file is a stack by default but not with minSlices 3", async () => {
    const two = writeTiff(stackToPages(sampleStack("uint16", 0, 0, [2, 16, 16]).stack));
    await expect(readTiffStack(two)).resolves.toBeDefined();
    await expect(readTiffStack(two, { minSlices: 3 })).rejects.toMatchObject({ code: "not_a_stack" });
    await expect(readTiffStack(two, { minSlices: 1, channel: -1 })).rejects.toMatchObject({
      code: "bad_option",
    });
  });
});

describe("mutation corpus: every case reads or throws TiffInputError, fast", () => {
  it("≥ 500 seeded mutations, each within 2 s, never another error type", async () => {
    const bases = [
      "own-u16-le-classic-strips",
      "own-u16-be-bigtiff-tiles",
      "tiffcp-u16-lzw-pred",
      "tiffcp-u16-zip-pred-tiles",
      "tiffcp-u16-packbits",
      "tiffcp-u16-lzw-pred-be",
      "tiffcp-f32-zip-fpred",
      "own-ome-xyczt",
      "own-imagej-c2-t2",
    ].map((name) => ({
      name,
      bytes: new Uint8Array(readFileSync(join(samplesDir, `${name}.tif`))),
    }));
    const counts = { read: 0, refused: 0 };
    const byCode: Record<string, number> = {};
    let n = 0;
    let slowest = 0;
    for (const m of mutationCorpus(bases, 540, 7)) {
      n++;
      const t0 = performance.now();
      try {
        await inspectTiff(m.bytes);
      } catch (e) {
        if (!(e instanceof TiffInputError))
          throw new Error(
            `inspectTiff, case ${n} (${m.kind} of ${m.base}, seed ${m.seed}) threw ${String(e)}`,
            { cause: e },
          );
      }
      try {
        await readTiffStack(m.bytes);
        counts.read++;
      } catch (e) {
        if (!(e instanceof TiffInputError)) {
          throw new Error(`case ${n} (${m.kind} of ${m.base}, seed ${m.seed}) threw ${String(e)}`, {
            cause: e,
          });
        }
        counts.refused++;
        byCode[e.code] = (byCode[e.code] ?? 0) + 1;
      }
      const dt = performance.now() - t0;
      slowest = Math.max(slowest, dt);
      expect(dt, `case ${n} (${m.kind} of ${m.base}, seed ${m.seed})`).toBeLessThan(2000);
    }
    expect(n).toBeGreaterThanOrEqual(500);
    expect(counts.refused).toBeGreaterThan(100);
    expect(Object.keys(byCode).length).toBeGreaterThanOrEqual(5);
  }, 120_000);
});
