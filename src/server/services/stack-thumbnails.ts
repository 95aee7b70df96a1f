/**
 * Preview images of stacks: the maximum-intensity projection of one channel as a small grey
 * PNG. Decoding a large stack takes seconds and its full size in memory, so each PNG is made
 * once and kept under DATA_DIR/thumbnails (a stack's bytes never change, and an id is never
 * reused). The access check runs on every request, before the cache is read.
 */
import { mkdir, readFile, rename, rm, writeFile } from "node:fs/promises";
import path from "node:path";
import { inflateSync } from "node:zlib";
import { decodeDeflate, maxProjection, readTiffStack, TiffInputError, toGreyThumbnail } from "../../lib/tiff";
import { getEnv } from "../../env";
import type { Db } from "../db/client";
import { requirePermission, type Actor } from "../auth/permissions";
import { AppError } from "../http/errors";
import { encodeGreyPng } from "../images/encode-grey-png";
import type { ObjectStorage } from "../storage/storage";
import { thumbnailFile } from "./stack-thumbnail-files";
import { getStackRow, tiffErrorToAppError } from "./stacks";

export { thumbnailsDir } from "./stack-thumbnail-files";

export const THUMBNAIL_MIN_SIDE_PX = 16;
export const THUMBNAIL_MAX_SIDE_PX = 1024;

export interface StackThumbnailOptions {
  /** 0-based channel of the file. @default 0 */
  channel?: number;
  /** Longest side of the PNG, px (16–1024; smaller images keep their size). @default 256 */
  maxSidePx?: number;
}

/** Thumbnails being made right now, so concurrent requests for the same one decode once. */
const inFlight = new Map<string, Promise<Uint8Array>>();

/**
 * At most this many stacks are decoded at once per process: a list page asks for dozens of
 * thumbnails together, and each decode holds a whole stack (up to MAX_STACK_VOXELS) in memory.
 */
const MAX_CONCURRENT_DECODES = 2;
let running = 0;
const waiting: Array<() => void> = [];

async function withDecodeSlot<T>(fn: () => Promise<T>): Promise<T> {
  if (running >= MAX_CONCURRENT_DECODES) await new Promise<void>((resolve) => waiting.push(resolve));
  else running++;
  try {
    return await fn();
  } finally {
    // Hand the slot straight to the next waiter, or give it back.
    const next = waiting.shift();
    if (next) next();
    else running--;
  }
}

/** The PNG bytes of a stack's maximum-intensity projection (one channel), from the cache when there. */
export async function getStackThumbnailPng(
  db: Db,
  storage: ObjectStorage,
  actor: Actor,
  id: string,
  options: StackThumbnailOptions = {},
): Promise<Uint8Array> {
  const { channel = 0, maxSidePx = 256 } = options;
  requirePermission(actor, "stacks.upload");
  const row = await getStackRow(db, actor, id);
  if (!Number.isInteger(channel) || channel < 0 || channel >= row.channels) {
    throw new AppError(
      "unprocessable",
      `Channel ${channel} does not exist: this stack has ${row.channels} channel(s), numbered from 0.`,
    );
  }
  if (
    !Number.isInteger(maxSidePx) ||
    maxSidePx < THUMBNAIL_MIN_SIDE_PX ||
    maxSidePx > THUMBNAIL_MAX_SIDE_PX
  ) {
    throw new AppError(
      "unprocessable",
      `The thumbnail size must be a whole number of pixels from ${THUMBNAIL_MIN_SIDE_PX} to ${THUMBNAIL_MAX_SIDE_PX}.`,
    );
  }
  const file = thumbnailFile(row.id, channel, maxSidePx);
  const cached = await readFile(file).catch(() => null);
  if (cached) return new Uint8Array(cached.buffer, cached.byteOffset, cached.byteLength);

  let job = inFlight.get(file);
  if (!job) {
    job = withDecodeSlot(() => makeThumbnail(storage, row.storageKey, channel, maxSidePx, file)).finally(() =>
      inFlight.delete(file),
    );
    inFlight.set(file, job);
  }
  return job;
}

async function makeThumbnail(
  storage: ObjectStorage,
  key: string,
  channel: number,
  maxSidePx: number,
  file: string,
): Promise<Uint8Array> {
  const bytes = await storage.getBytes(key);
  let stack;
  try {
    ({ stack } = await readTiffStack(bytes, { channel, maxVoxels: getEnv().MAX_STACK_VOXELS, inflate }));
  } catch (err) {
    if (err instanceof TiffInputError) throw tiffErrorToAppError(err);
    throw err;
  }
  const png = encodeGreyPng(toGreyThumbnail(maxProjection(stack), { maxSidePx }));
  // Write under a temporary name and rename, so a reader never sees half a file.
  await mkdir(path.dirname(file), { recursive: true });
  const tmp = `${file}.${process.pid}.${Date.now()}.tmp`;
  try {
    await writeFile(tmp, png);
    await rename(tmp, file);
  } catch {
    // The cache is an optimisation: a full disk must not fail the request.
    await rm(tmp, { force: true }).catch(() => {});
  }
  return png;
}

/** node:zlib for Deflate strips (about twice the pure-JS speed); the pure decoder for raw or corrupt data. */
function inflate(compressed: Uint8Array, out: Uint8Array): number {
  let result: Buffer;
  try {
    result = inflateSync(compressed);
  } catch {
    return decodeDeflate(compressed, out);
  }
  const n = Math.min(result.length, out.length);
  out.set(result.subarray(0, n));
  return n;
}
