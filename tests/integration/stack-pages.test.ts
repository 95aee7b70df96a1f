import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { crc32, inflateSync } from "node:zlib";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb, getDb } from "@/server/db/client";
import { measurements } from "@/server/db/schema";
import { LocalStorage } from "@/server/storage/local-storage";
import { getStackThumbnailPng, thumbnailsDir } from "@/server/services/stack-thumbnails";
import {
  deleteStack,
  getStackDetail,
  listStacksWithUsage,
  registerStackFromFile,
} from "@/server/services/stacks";
import { maxProjection, readTiffStack, toGreyThumbnail } from "@/lib/tiff";
import type { Actor } from "@/server/auth/permissions";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";
import { makeFacility, type TestFacility } from "./helpers";

// The stacks are invented demo stacks (fixtures/demo-stacks.ts).

let f: TestFacility;
let other: TestFacility;
let dir: string;
let storage: LocalStorage;
let staffFile: string;
let staffStackId: string;
let researcherStackId: string;
let unusedStackId: string;

function demoFile(name: string, seed: number, shape: [number, number, number]): string {
  const demo = makeDemoBeadStack({
    na: 1.4,
    immersionRi: 1.518,
    sampleRi: 1.518,
    emissionWavelengthNm: 520,
    beadCount: 4,
    shape,
    seed,
  });
  const file = path.join(dir, name);
  writeFileSync(file, demo.tiff);
  return file;
}

async function addMeasurement(
  stackId: string,
  by: Actor,
  purpose: "routine" | "sample",
  objectiveId: string,
) {
  const [row] = await getDb()
    .insert(measurements)
    .values({
      facilityId: f.facilityId,
      stackId,
      objectiveId,
      createdBy: by.userId,
      purpose,
      modality: "widefield",
      parameters: {},
    })
    .returning();
  return row!.id;
}

/** Split a PNG into its chunks, checking every CRC on the way. Source: PNG specification §5.3 — from memory. */
function pngChunks(png: Uint8Array): Array<{ type: string; data: Uint8Array }> {
  const view = new DataView(png.buffer, png.byteOffset, png.byteLength);
  const chunks: Array<{ type: string; data: Uint8Array }> = [];
  let off = 8;
  while (off < png.length) {
    const len = view.getUint32(off);
    const type = String.fromCharCode(...png.subarray(off + 4, off + 8));
    const data = png.subarray(off + 8, off + 8 + len);
    expect(view.getUint32(off + 8 + len), `CRC of ${type}`).toBe(crc32(png.subarray(off + 4, off + 8 + len)));
    chunks.push({ type, data });
    off += 12 + len;
  }
  return chunks;
}

/** Width, height and grey pixels of an 8-bit greyscale PNG written with filter type 0. */
function decodeGreyPng(png: Uint8Array) {
  const chunks = pngChunks(png);
  expect(chunks.map((c) => c.type)).toEqual(["IHDR", "IDAT", "IEND"]);
  const ihdr = new DataView(chunks[0]!.data.buffer, chunks[0]!.data.byteOffset, 13);
  const width = ihdr.getUint32(0);
  const height = ihdr.getUint32(4);
  expect([ihdr.getUint8(8), ihdr.getUint8(9)]).toEqual([8, 0]); // 8-bit, greyscale
  const raw = inflateSync(chunks[1]!.data);
  expect(raw.length).toBe(height * (width + 1));
  const pixels = new Uint8Array(width * height);
  for (let y = 0; y < height; y++) {
    expect(raw[y * (width + 1)]).toBe(0);
    pixels.set(raw.subarray(y * (width + 1) + 1, (y + 1) * (width + 1)), y * width);
  }
  return { width, height, pixels };
}

beforeAll(async () => {
  f = await makeFacility("stack-pages");
  other = await makeFacility("stack-pages-other");
  dir = mkdtempSync(path.join(tmpdir(), "bb-stack-pages-"));
  storage = new LocalStorage(path.join(dir, "objects"));
  staffFile = demoFile("staff.tif", 11, [24, 64, 96]);
  staffStackId = (
    await registerStackFromFile(getDb(), storage, f.actors.staff, {
      filePath: staffFile,
      fileName: "staff.tif",
    })
  ).id;
  researcherStackId = (
    await registerStackFromFile(getDb(), storage, f.actors.researcher, {
      filePath: demoFile("mine.tif", 12, [16, 48, 48]),
      fileName: "mine.tif",
    })
  ).id;
  unusedStackId = (
    await registerStackFromFile(getDb(), storage, f.actors.admin, {
      filePath: demoFile("unused.tif", 13, [16, 32, 32]),
      fileName: "unused.tif",
    })
  ).id;
  // Staff's stack: a routine check on the engineer's assigned instrument and a sample run on the other one.
  await addMeasurement(staffStackId, f.actors.staff, "routine", f.objectiveIds[0]);
  await addMeasurement(staffStackId, f.actors.staff, "sample", f.objectiveIds[1]);
  // The researcher's stack: their own sample run, and one by staff.
  await addMeasurement(researcherStackId, f.actors.researcher, "sample", f.objectiveIds[1]);
  await addMeasurement(researcherStackId, f.actors.staff, "sample", f.objectiveIds[1]);
});
afterAll(async () => {
  rmSync(dir, { recursive: true, force: true });
  for (const id of [staffStackId, researcherStackId, unusedStackId])
    for (const size of [32, 256]) rmSync(path.join(thumbnailsDir(), `${id}-0-${size}.png`), { force: true });
  await closeDb();
});

describe("getStackThumbnailPng", () => {
  it("returns a PNG of the stack's projection with the expected size and pixels", async () => {
    const png = await getStackThumbnailPng(getDb(), storage, f.actors.staff, staffStackId, { maxSidePx: 32 });
    expect(Array.from(png.subarray(0, 8))).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
    const { width, height, pixels } = decodeGreyPng(png);
    // 96 × 64 px reduced by blocks of ceil(96 / 32) = 3 px → 32 × ceil(64 / 3) = 22.
    expect([width, height]).toEqual([32, 22]);
    const { stack } = await readTiffStack(readFileSync(staffFile));
    const truth = toGreyThumbnail(maxProjection(stack), { maxSidePx: 32 });
    expect(Array.from(pixels)).toEqual(Array.from(truth.data));
    expect(pixels.some((p) => p === 255)).toBe(true); // the beads
    expect(pixels.some((p) => p === 0)).toBe(true); // the background
  });

  it("keeps a small stack's size at the default 256 px and caches the PNG under DATA_DIR/thumbnails", async () => {
    const png = await getStackThumbnailPng(getDb(), storage, f.actors.admin, staffStackId);
    expect(decodeGreyPng(png)).toMatchObject({ width: 96, height: 64 });
    const cacheFile = path.join(thumbnailsDir(), `${staffStackId}-0-256.png`);
    expect(existsSync(cacheFile)).toBe(true);
    expect(readFileSync(cacheFile).equals(Buffer.from(png))).toBe(true);
    // A second request is served from the file, not decoded again.
    writeFileSync(cacheFile, Buffer.from("cached-marker"));
    const again = await getStackThumbnailPng(getDb(), storage, f.actors.staff, staffStackId);
    expect(Buffer.from(again).toString()).toBe("cached-marker");
    writeFileSync(cacheFile, png);
  });

  it("checks access before the cache: a researcher gets not_found for another member's stack", async () => {
    // The PNG is cached by now (previous tests); the answer must still be 404.
    await expect(
      getStackThumbnailPng(getDb(), storage, f.actors.researcher, staffStackId, { maxSidePx: 32 }),
    ).rejects.toMatchObject({ code: "not_found", status: 404 });
    await expect(
      getStackThumbnailPng(getDb(), storage, other.actors.admin, staffStackId, { maxSidePx: 32 }),
    ).rejects.toMatchObject({ code: "not_found" });
    const own = await getStackThumbnailPng(getDb(), storage, f.actors.researcher, researcherStackId);
    expect(decodeGreyPng(own)).toMatchObject({ width: 48, height: 48 });
  });

  it("refuses a channel the stack lacks and an out-of-range size", async () => {
    await expect(
      getStackThumbnailPng(getDb(), storage, f.actors.staff, staffStackId, { channel: 1 }),
    ).rejects.toMatchObject({ code: "unprocessable", message: expect.stringContaining("1 channel(s)") });
    await expect(
      getStackThumbnailPng(getDb(), storage, f.actors.staff, staffStackId, { maxSidePx: 4096 }),
    ).rejects.toMatchObject({ code: "unprocessable" });
  });
});

describe("listStacksWithUsage and getStackDetail", () => {
  it("lists the facility's stacks with the uploader's name and the number of measurements using each", async () => {
    const list = await listStacksWithUsage(getDb(), f.actors.staff);
    const byId = new Map(list.map((s) => [s.id, s]));
    expect(list.map((s) => s.id).sort()).toEqual([staffStackId, researcherStackId, unusedStackId].sort());
    expect(byId.get(staffStackId)).toMatchObject({
      fileName: "staff.tif",
      width: 96,
      height: 64,
      slices: 24,
      uploadedByName: expect.stringMatching(/^staff /),
      measurementCount: 2,
    });
    expect(byId.get(researcherStackId)!.measurementCount).toBe(2);
    expect(byId.get(unusedStackId)!.measurementCount).toBe(0);
    expect(byId.get(unusedStackId)!.uploadedByName).toMatch(/^admin /);
  });

  it("shows a researcher only their own stacks, and another facility nothing", async () => {
    const mine = await listStacksWithUsage(getDb(), f.actors.researcher);
    expect(mine.map((s) => s.id)).toEqual([researcherStackId]);
    const theirs = await listStacksWithUsage(getDb(), other.actors.admin);
    expect(theirs).toEqual([]);
    await expect(getStackDetail(getDb(), f.actors.researcher, staffStackId)).rejects.toMatchObject({
      code: "not_found",
    });
    await expect(getStackDetail(getDb(), other.actors.staff, researcherStackId)).rejects.toMatchObject({
      code: "not_found",
    });
  });

  it("gives the detail with its metadata record and the measurements the actor may open", async () => {
    const d = await getStackDetail(getDb(), f.actors.staff, staffStackId);
    expect(d.measurementCount).toBe(2);
    expect(d.measurements).toHaveLength(2);
    expect(d.measurements[0]).toMatchObject({
      objectiveName: expect.any(String),
      status: "queued",
      channel: 0,
    });
    // Source: ImageJ description keys spacing=/unit= (QC-PRACTICE.md §5.2); the demo writer sets them.
    expect(d.metadata!.voxelSizeUm.z).toMatchObject({ source: "imagej" });
    expect(d.metadata!.voxelSizeUm.z!.value).toBeCloseTo(0.15, 6);
    expect(d.metadata!.slices).toEqual({ value: 24, source: "imagej" });
    expect(d.uploadedByName).toMatch(/^staff /);

    // A visiting engineer works on the stacks they uploaded; staff's stack is not found for them.
    await expect(getStackDetail(getDb(), f.actors.engineer, staffStackId)).rejects.toMatchObject({
      code: "not_found",
    });

    // A researcher sees their own sample run on their stack, not the one staff made.
    const res = await getStackDetail(getDb(), f.actors.researcher, researcherStackId);
    expect(res.measurementCount).toBe(2);
    expect(res.measurements).toHaveLength(1);
    expect(res.measurements[0]!.createdByName).toMatch(/^researcher /);
  });

  it("keeps a used stack (409) and deletes an unused one, which then leaves the list", async () => {
    await expect(deleteStack(getDb(), storage, f.actors.staff, staffStackId)).rejects.toMatchObject({
      code: "conflict",
      status: 409,
    });
    // Its cached thumbnails go with it (two sizes made here).
    for (const maxSidePx of [32, 64])
      await getStackThumbnailPng(getDb(), storage, f.actors.admin, unusedStackId, { maxSidePx });
    const cached = () => readdirSync(thumbnailsDir()).filter((n) => n.startsWith(`${unusedStackId}-`));
    expect(cached()).toHaveLength(2);
    await deleteStack(getDb(), storage, f.actors.admin, unusedStackId);
    const list = await listStacksWithUsage(getDb(), f.actors.admin);
    expect(list.map((s) => s.id)).not.toContain(unusedStackId);
    expect(cached()).toEqual([]);
  });
});
