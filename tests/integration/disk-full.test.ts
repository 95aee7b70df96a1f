/**
 * A full storage folder: registering a stack whose bytes do not fit must fail with a clear
 * 503 "The storage is full…", leave no row, no partial object and no final object, and the same
 * upload must succeed once space is freed.
 *
 * The storage is a real 4 MB tmpfs mounted for this test (needs root / CAP_SYS_ADMIN), so the
 * ENOSPC comes from the kernel in the middle of LocalStorage's copy. Where `mount` is not
 * permitted, the test says so and falls back to a fake ObjectStorage whose putFile writes half
 * the file under the temporary name and fails with ENOSPC (removing it, as LocalStorage does):
 * that still checks the service's mapping and clean-up, not the kernel's behaviour. It never skips.
 */
import { execFileSync } from "node:child_process";
import { createHash } from "node:crypto";
import {
  mkdirSync,
  mkdtempSync,
  readdirSync,
  readFileSync,
  rmSync,
  statSync,
  statfsSync,
  writeFileSync,
} from "node:fs";
import { mkdir, open, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { closeDb, getDb } from "@/server/db/client";
import { stacks } from "@/server/db/schema";
import { AppError } from "@/server/http/errors";
import { registerStackFromFile } from "@/server/services/stacks";
import { LocalStorage } from "@/server/storage/local-storage";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";
import { makeFacility, type TestFacility } from "./helpers";

const TMPFS_BYTES = 4 * 1024 * 1024;

/** Invented stand-in for a full disk where tmpfs cannot be mounted: see the file comment. */
class FullDiskStorage extends LocalStorage {
  full = true;
  constructor(private readonly base: string) {
    super(base);
  }
  override async putFile(key: string, filePath: string): Promise<void> {
    if (!this.full) return super.putFile(key, filePath);
    const dest = path.resolve(this.base, key);
    await mkdir(path.dirname(dest), { recursive: true });
    const tmp = `${dest}.partial-${process.pid}-${Date.now()}`;
    const size = statSync(filePath).size;
    const src = await open(filePath, "r");
    const out = await open(tmp, "w");
    try {
      const half = Buffer.alloc(Math.floor(size / 2));
      await src.read(half, 0, half.length, 0);
      await out.write(half);
    } finally {
      await src.close();
      await out.close();
    }
    await rm(tmp, { force: true });
    throw Object.assign(new Error(`ENOSPC: no space left on device, copyfile '${filePath}' -> '${tmp}'`), {
      code: "ENOSPC",
      errno: -28,
      syscall: "copyfile",
    });
  }
}

let f: TestFacility;
let dir: string;
let root: string;
let mounted = false;
let storage: LocalStorage | FullDiskStorage;
let stackFile: string;
let fillerFile: string;

function listFiles(top: string): string[] {
  return readdirSync(top, { recursive: true, withFileTypes: true })
    .filter((d) => d.isFile())
    .map((d) => path.relative(top, path.join(d.parentPath, d.name)));
}

beforeAll(async () => {
  f = await makeFacility("disk-full");
  dir = mkdtempSync(path.join(tmpdir(), "bb-disk-full-"));
  root = path.join(dir, "objects");
  mkdirSync(root);
  try {
    execFileSync("mount", ["-t", "tmpfs", "-o", `size=${TMPFS_BYTES}`, "tmpfs", root], { stdio: "pipe" });
    mounted = true;
  } catch (err) {
    console.warn(
      `[disk-full] cannot mount a tmpfs here (${String(err).split("\n")[0]}); using a fake storage that fails with ENOSPC instead`,
    );
  }
  storage = mounted ? new LocalStorage(root) : new FullDiskStorage(root);
  // Not a skip: say which mode ran, so a fallback run is visible in the output.
  console.log(
    `[disk-full] storage: ${mounted ? `tmpfs of ${TMPFS_BYTES} bytes (kernel ENOSPC)` : "fake ENOSPC storage"}`,
  );
  // Invented data: a 40 × 96 × 96 uint16 bead stack, about 740 kB (kept outside the storage folder).
  const demo = makeDemoBeadStack({
    na: 1.4,
    immersionRi: 1.518,
    sampleRi: 1.518,
    emissionWavelengthNm: 520,
    beadCount: 4,
    shape: [40, 96, 96],
    seed: 41,
  });
  stackFile = path.join(dir, "stack.tif");
  writeFileSync(stackFile, demo.tiff);
  fillerFile = path.join(root, "filler.bin");
});

afterAll(async () => {
  if (mounted) {
    try {
      execFileSync("umount", [root], { stdio: "pipe" });
    } catch {
      execFileSync("umount", ["-l", root], { stdio: "pipe" });
    }
  }
  if (dir) rmSync(dir, { recursive: true, force: true });
  await closeDb();
});

describe("registerStackFromFile on a full storage folder", () => {
  it("refuses with 503 'storage is full', leaves no row and no object, and succeeds once space is freed", async () => {
    const size = statSync(stackFile).size;
    if (mounted) {
      // Fill the tmpfs until only half the stack would fit.
      const { bavail, bsize } = statfsSync(root);
      const free = bavail * bsize;
      expect(free).toBeGreaterThan(size);
      writeFileSync(fillerFile, Buffer.alloc(free - Math.floor(size / 2)));
      const left = statfsSync(root);
      expect(left.bavail * left.bsize).toBeLessThan(size);
    }

    let caught: unknown;
    try {
      await registerStackFromFile(getDb(), storage, f.actors.staff, {
        filePath: stackFile,
        fileName: "too-big-for-the-disk.tif",
      });
    } catch (err) {
      caught = err;
    }
    expect(caught).toBeInstanceOf(AppError);
    const e = caught as AppError;
    // Source: RFC 9110 §15.6.4 — 503 for a temporary condition on the server's side (common practice for a full store).
    expect(e.code).toBe("unavailable");
    expect(e.status).toBe(503);
    expect(e.message).toMatch(/^The storage is full/);
    // Source: POSIX errno ENOSPC, "No space left on device" — what the kernel reported.
    expect((e.cause as NodeJS.ErrnoException).code).toBe("ENOSPC");

    const rows = await getDb().select().from(stacks).where(eq(stacks.facilityId, f.facilityId));
    expect(rows).toEqual([]);
    const files = listFiles(root);
    expect(files.filter((p) => p.includes(".partial-"))).toEqual([]);
    expect(files.filter((p) => p.startsWith("stacks/") && p.endsWith(".tif"))).toEqual([]);
    expect(files).toEqual(mounted ? ["filler.bin"] : []);

    // Free the space; the same upload now goes through.
    if (mounted) await rm(fillerFile);
    else (storage as FullDiskStorage).full = false;
    const stored = await registerStackFromFile(getDb(), storage, f.actors.staff, {
      filePath: stackFile,
      fileName: "too-big-for-the-disk.tif",
    });
    expect(stored.duplicate).toBe(false);
    expect(stored.sizeBytes).toBe(size);
    const after = await getDb().select().from(stacks).where(eq(stacks.facilityId, f.facilityId));
    expect(after.map((r) => r.id)).toEqual([stored.id]);
    expect(listFiles(root)).toEqual([after[0]!.storageKey]);
    // The stored object is the whole file (same SHA-256 as registered).
    const object = readFileSync(path.join(root, after[0]!.storageKey));
    expect(createHash("sha256").update(object).digest("hex")).toBe(stored.sha256);
  });
});
