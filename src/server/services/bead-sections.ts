/**
 * Sections through one bead for the bead viewer: the voxels around the bead's
 * refined centre, read back from the stored stack, with the fitted widths so the
 * page can overlay the fitted profiles. The last decoded stack is kept in memory,
 * since users click through the beads of one measurement.
 */
import { and, eq } from "drizzle-orm";
import { extractWindow } from "../../lib/psf/extract-window";
import { readTiffStack, type Stack } from "../../lib/tiff";
import { getEnv } from "../../env";
import type { Db } from "../db/client";
import { beadResults, stacks } from "../db/schema";
import type { Actor } from "../auth/permissions";
import { notFound } from "../http/errors";
import type { ObjectStorage } from "../storage/storage";
import { getMeasurementRow } from "./measurements";

let cache: { key: string; stack: Stack } | null = null;

async function loadStack(
  storage: ObjectStorage,
  key: string,
  channel: number,
  voxel: Stack["voxelSizeUm"],
): Promise<Stack> {
  const cacheKey = `${key}#${channel}`;
  if (cache?.key === cacheKey) return cache.stack;
  const bytes = await storage.getBytes(key);
  const { stack } = await readTiffStack(bytes, { channel, maxVoxels: getEnv().MAX_STACK_VOXELS });
  if (voxel) stack.voxelSizeUm = voxel;
  cache = { key: cacheKey, stack };
  return stack;
}

export async function getBeadSections(
  db: Db,
  storage: ObjectStorage,
  actor: Actor,
  measurementId: string,
  beadIndex: number,
) {
  const m = await getMeasurementRow(db, actor, measurementId);
  const [bead] = await db
    .select()
    .from(beadResults)
    .where(and(eq(beadResults.measurementId, m.id), eq(beadResults.beadIndex, beadIndex)));
  if (!bead) throw notFound("Bead");
  const [stackRow] = await db.select().from(stacks).where(eq(stacks.id, m.stackId));
  const summary = (m.summary ?? {}) as { voxelSizeUm?: { x: number; y: number; z: number } };
  const voxel =
    summary.voxelSizeUm ??
    (stackRow!.voxelXUm ? { x: stackRow!.voxelXUm, y: stackRow!.voxelYUm!, z: stackRow!.voxelZUm! } : null);
  if (!voxel) throw notFound("Voxel size");
  const stack = await loadStack(storage, stackRow!.storageKey, m.channel, voxel);
  // ±1.5 µm laterally and ±4 µm axially: the core and the first rings / side lobes.
  const half = { x: Math.ceil(1.5 / voxel.x), y: Math.ceil(1.5 / voxel.y), z: Math.ceil(4 / voxel.z) };
  const w = extractWindow(stack, { x: bead.xPx, y: bead.yPx, z: bead.zPx }, half);
  for (let i = 0; i < w.data.length; i++) if (Number.isNaN(w.data[i]!)) w.data[i] = bead.background ?? 0;
  return {
    beadIndex,
    shape: w.shape,
    voxelSizeUm: voxel,
    /** Offset (voxels) of the bead's refined centre from the window's centre voxel. */
    centreOffsetPx: {
      x: bead.xPx - Math.round(bead.xPx),
      y: bead.yPx - Math.round(bead.yPx),
      z: bead.zPx - Math.round(bead.zPx),
    },
    fit: {
      amplitude: bead.amplitude,
      background: bead.background,
      fwhmXUm: bead.fwhmXUm,
      fwhmYUm: bead.fwhmYUm,
      fwhmZUm: bead.fwhmZUm,
      fwhmZDirectUm: bead.fwhmZDirectUm,
    },
    dataBase64: Buffer.from(w.data.buffer, w.data.byteOffset, w.data.byteLength).toString("base64"),
  };
}
