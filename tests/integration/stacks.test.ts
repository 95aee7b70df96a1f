import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { closeDb, getDb } from "@/server/db/client";
import { stacks } from "@/server/db/schema";
import { AppError } from "@/server/http/errors";
import { LocalStorage } from "@/server/storage/local-storage";
import { deleteStack, listStacks, registerStackFromFile } from "@/server/services/stacks";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";
import { makeFacility, type TestFacility } from "./helpers";

let f: TestFacility;
let other: TestFacility;
let dir: string;
let storage: LocalStorage;
let goodFile: string;

function listFiles(root: string): string[] {
  try {
    return readdirSync(root, { recursive: true, withFileTypes: true })
      .filter((d) => d.isFile())
      .map((d) => path.join(d.parentPath, d.name));
  } catch {
    return [];
  }
}

beforeAll(async () => {
  f = await makeFacility("stacks");
  other = await makeFacility("stacks-other");
  dir = mkdtempSync(path.join(tmpdir(), "bb-stacks-"));
  storage = new LocalStorage(path.join(dir, "objects"));
  const demo = makeDemoBeadStack({
    na: 1.4,
    immersionRi: 1.518,
    sampleRi: 1.518,
    emissionWavelengthNm: 520,
    beadCount: 4,
    shape: [40, 64, 64],
    seed: 3,
  });
  goodFile = path.join(dir, "good.tif");
  writeFileSync(goodFile, demo.tiff);
});
afterAll(async () => {
  rmSync(dir, { recursive: true, force: true });
  await closeDb();
});

describe("registerStackFromFile", () => {
  it("stores a valid stack, reads its voxel size from the ImageJ description, and recognises a re-upload", async () => {
    const first = await registerStackFromFile(getDb(), storage, f.actors.staff, {
      filePath: goodFile,
      fileName: "good.tif",
    });
    expect(first.duplicate).toBe(false);
    expect(first).toMatchObject({
      width: 64,
      height: 64,
      slices: 40,
      channels: 1,
      dtype: "uint16",
      metadataSource: "imagej",
    });
    // Source: ImageJ description keys spacing=/unit= and 1/XResolution pixel width (QC-PRACTICE.md §5.2)
    expect(first.voxelSizeUm!.x).toBeCloseTo(0.065, 6);
    expect(first.voxelSizeUm!.z).toBeCloseTo(0.15, 6);
    expect(first.sha256).toMatch(/^[0-9a-f]{64}$/);
    expect(listFiles(path.join(dir, "objects"))).toHaveLength(1);

    const again = await registerStackFromFile(getDb(), storage, f.actors.admin, {
      filePath: goodFile,
      fileName: "copy.tif",
    });
    expect(again.duplicate).toBe(true);
    expect(again.id).toBe(first.id);
    expect(listFiles(path.join(dir, "objects"))).toHaveLength(1);
  });

  it("keeps facilities apart: the same bytes in another facility are a new stack", async () => {
    const elsewhere = await registerStackFromFile(getDb(), storage, other.actors.admin, {
      filePath: goodFile,
      fileName: "good.tif",
    });
    expect(elsewhere.duplicate).toBe(false);
    const mine = await listStacks(getDb(), f.actors.admin);
    expect(mine.map((s) => s.id)).not.toContain(elsewhere.id);
  });

  const badDir = path.resolve("fixtures/bad");
  const manifest = JSON.parse(readFileSync(path.join(badDir, "manifest.json"), "utf8")) as Array<{
    name: string;
    code: string;
  }>;
  const expectedStatus = (code: string) => (code === "not_tiff" ? 415 : code === "too_large" ? 413 : 422);

  it.each(manifest)("refuses $name with a specific 4xx and leaves nothing behind", async ({ name, code }) => {
    const before = await getDb()
      .select({ id: stacks.id })
      .from(stacks)
      .where(eq(stacks.facilityId, f.facilityId));
    const filesBefore = listFiles(path.join(dir, "objects")).length;
    let caught: unknown;
    try {
      await registerStackFromFile(getDb(), storage, f.actors.staff, {
        filePath: path.join(badDir, name),
        fileName: name,
      });
    } catch (err) {
      caught = err;
    }
    expect(caught).toBeInstanceOf(AppError);
    const e = caught as AppError;
    // An empty file is refused before the reader sees it.
    expect(e.status).toBe(name === "empty.tif" ? 422 : expectedStatus(code));
    expect(e.message.length).toBeGreaterThan(10);
    const after = await getDb()
      .select({ id: stacks.id })
      .from(stacks)
      .where(eq(stacks.facilityId, f.facilityId));
    expect(after.length).toBe(before.length);
    expect(listFiles(path.join(dir, "objects")).length).toBe(filesBefore);
  });

  it("lets staff delete an unused stack (row and bytes), never another facility's", async () => {
    const [row] = await getDb().select().from(stacks).where(eq(stacks.facilityId, other.facilityId));
    await expect(deleteStack(getDb(), storage, f.actors.admin, row!.id)).rejects.toMatchObject({
      code: "not_found",
    });
    await expect(deleteStack(getDb(), storage, other.actors.researcher, row!.id)).rejects.toMatchObject({
      code: "forbidden",
    });
    await deleteStack(getDb(), storage, other.actors.staff, row!.id);
    expect(await storage.exists(row!.storageKey)).toBe(false);
  });
});
