/**
 * Registering an uploaded TIFF as a stack: inspect it (refusing bad files with a
 * specific 4xx), hash it, recognise a duplicate within the facility, store the
 * bytes, and only then commit the row. A failure at any step leaves no row and
 * no stored object behind.
 */
import { createHash } from "node:crypto";
import { readFile, stat } from "node:fs/promises";
import { and, desc, eq } from "drizzle-orm";
import { inspectTiff, TiffInputError, voxelSizeFromMetadata, type TiffMetadata } from "../../lib/tiff";
import type { StackDto, StackUploadMeta } from "../../contracts/stacks";
import { getEnv } from "../../env";
import type { Db } from "../db/client";
import { measurements, stacks, type Stack } from "../db/schema";
import { insertAuditEntry } from "../db/queries/audit";
import { listAssignedInstrumentIds } from "../db/queries/service-visits";
import {
  getStackUploaderName,
  listMeasurementsByStack,
  listStacksWithUsageByFacility,
} from "../db/queries/stacks";
import { requirePermission, type Actor } from "../auth/permissions";
import { AppError, notFound } from "../http/errors";
import { stackKey, type ObjectStorage } from "../storage/storage";
import { cutText } from "../../lib/text/cut-text";
import { deleteStackThumbnails } from "./stack-thumbnail-files";

export function toStackDto(row: Stack, duplicate?: boolean): StackDto {
  return {
    id: row.id,
    fileName: row.fileName,
    sha256: row.sha256,
    sizeBytes: row.sizeBytes,
    width: row.width,
    height: row.height,
    slices: row.slices,
    channels: row.channels,
    frames: row.frames,
    dtype: row.dtype,
    voxelSizeUm:
      row.voxelXUm != null && row.voxelYUm != null && row.voxelZUm != null
        ? { x: row.voxelXUm, y: row.voxelYUm, z: row.voxelZUm }
        : null,
    metadataSource: row.metadataSource,
    createdAt: row.createdAt.toISOString(),
    ...(duplicate === undefined ? {} : { duplicate }),
  };
}

/** Map the reader's error codes onto HTTP statuses with the reader's own message. */
export function tiffErrorToAppError(err: TiffInputError): AppError {
  const code =
    err.code === "not_tiff"
      ? "unsupported_media_type"
      : err.code === "too_large"
        ? "too_large"
        : "unprocessable";
  return new AppError(code, err.message, { details: { reason: err.code } });
}

/** True when the error (or one it wraps) is "no space left" or "quota exceeded" (POSIX errno ENOSPC, EDQUOT). */
function isStorageFull(err: unknown): boolean {
  for (let e = err, depth = 0; e && depth < 5; e = (e as { cause?: unknown }).cause, depth++) {
    const code = (e as { code?: unknown }).code;
    if (code === "ENOSPC" || code === "EDQUOT") return true;
  }
  return false;
}

export async function inspectStackBytes(bytes: Uint8Array): Promise<TiffMetadata> {
  try {
    return await inspectTiff(bytes, { minSlices: 2, maxVoxels: getEnv().MAX_STACK_VOXELS });
  } catch (err) {
    if (err instanceof TiffInputError) throw tiffErrorToAppError(err);
    throw new AppError("unprocessable", "The file could not be read as a TIFF stack.", { cause: err });
  }
}

/**
 * Whether the actor may upload at all: every role, an engineer only during a service visit
 * of theirs ("assigned" in the role matrix). Checked when a tus upload starts and again when
 * any upload is registered.
 * @throws 403 otherwise
 */
export async function requireUploadRight(db: Db, actor: Actor, now = new Date()): Promise<void> {
  if (requirePermission(actor, "stacks.upload") !== "assigned") return;
  const assigned = await listAssignedInstrumentIds(db, {
    facilityId: actor.facilityId,
    engineerId: actor.userId,
    at: now,
  });
  if (assigned.length === 0) {
    throw new AppError("forbidden", "Engineers upload stacks during a service visit of theirs only.");
  }
}

export async function registerStackFromFile(
  db: Db,
  storage: ObjectStorage,
  actor: Actor,
  input: { filePath: string; fileName: string; meta?: StackUploadMeta },
): Promise<StackDto> {
  await requireUploadRight(db, actor);
  const { size } = await stat(input.filePath);
  if (size === 0) throw new AppError("unprocessable", "The file is empty.");
  if (size > getEnv().MAX_UPLOAD_BYTES) {
    throw new AppError(
      "too_large",
      `The file is ${size} bytes; the limit is ${getEnv().MAX_UPLOAD_BYTES} bytes.`,
    );
  }
  const buf = await readFile(input.filePath);
  const bytes = new Uint8Array(buf.buffer, buf.byteOffset, buf.byteLength);
  const metadata = await inspectStackBytes(bytes);
  const sha256 = createHash("sha256").update(bytes).digest("hex");

  const [existing] = await db
    .select()
    .from(stacks)
    .where(and(eq(stacks.facilityId, actor.facilityId), eq(stacks.sha256, sha256)))
    .limit(1);
  if (existing) return toStackDto(existing, true);

  const fileVoxel = voxelSizeFromMetadata(metadata);
  const voxel = input.meta?.voxelSizeUm ?? fileVoxel;
  const source = input.meta?.voxelSizeUm ? "user" : fileVoxel ? metadata.format : "none";
  const key = stackKey(actor.facilityId, sha256);
  try {
    await storage.putFile(key, input.filePath);
  } catch (err) {
    // The store leaves nothing under the key on failure (LocalStorage: temp name, removed; S3: atomic put).
    if (isStorageFull(err)) {
      throw new AppError(
        "unavailable",
        "The storage is full, so the stack could not be saved. Ask an administrator to free space, then upload again.",
        { cause: err },
      );
    }
    throw err;
  }
  try {
    const row = await db.transaction(async (tx) => {
      const [inserted] = await tx
        .insert(stacks)
        .values({
          facilityId: actor.facilityId,
          uploadedBy: actor.userId,
          fileName: cutText(input.fileName, 255),
          storageKey: key,
          sha256,
          sizeBytes: size,
          width: metadata.width,
          height: metadata.height,
          slices: metadata.slices.value,
          channels: metadata.channels.value,
          frames: metadata.frames.value,
          dtype: metadata.dtype,
          voxelXUm: voxel?.x ?? null,
          voxelYUm: voxel?.y ?? null,
          voxelZUm: voxel?.z ?? null,
          sampleType: input.meta?.sampleType ?? null,
          metadata: metadata as unknown as Record<string, unknown>,
          metadataSource: source,
        })
        .onConflictDoNothing({ target: [stacks.facilityId, stacks.sha256] })
        .returning();
      if (!inserted) return null; // a concurrent upload of the same bytes won the race
      await insertAuditEntry(tx, {
        facilityId: actor.facilityId,
        userId: actor.userId,
        action: "stack.upload",
        targetType: "stack",
        targetId: inserted.id,
        details: { fileName: inserted.fileName, sizeBytes: size },
      });
      return inserted;
    });
    if (row) return toStackDto(row, false);
    const [winner] = await db
      .select()
      .from(stacks)
      .where(and(eq(stacks.facilityId, actor.facilityId), eq(stacks.sha256, sha256)));
    return toStackDto(winner!, true);
  } catch (err) {
    // Remove the object unless a row (a concurrent upload of the same bytes) now uses it.
    const [user] = await db
      .select({ id: stacks.id })
      .from(stacks)
      .where(eq(stacks.storageKey, key))
      .limit(1)
      .catch(() => [] as Array<{ id: string }>);
    if (!user) await storage.delete(key).catch(() => {});
    throw err;
  }
}

export async function listStacks(db: Db, actor: Actor) {
  requirePermission(actor, "stacks.upload");
  const where =
    actor.role === "researcher" || actor.role === "engineer"
      ? and(eq(stacks.facilityId, actor.facilityId), eq(stacks.uploadedBy, actor.userId))
      : eq(stacks.facilityId, actor.facilityId);
  const rows = await db.select().from(stacks).where(where).orderBy(desc(stacks.createdAt)).limit(200);
  return rows.map((r) => toStackDto(r));
}

export async function getStackRow(db: Db, actor: Actor, id: string): Promise<Stack> {
  const [row] = await db
    .select()
    .from(stacks)
    .where(and(eq(stacks.facilityId, actor.facilityId), eq(stacks.id, id)))
    .limit(1);
  if (!row) throw notFound("Stack");
  // Researchers and visiting engineers work on the stacks they uploaded themselves.
  if ((actor.role === "researcher" || actor.role === "engineer") && row.uploadedBy !== actor.userId)
    throw notFound("Stack");
  return row;
}

export async function getStack(db: Db, actor: Actor, id: string) {
  const row = await getStackRow(db, actor, id);
  return { ...toStackDto(row), metadata: row.metadata as TiffMetadata | null };
}

/** Delete a stack and its bytes; refused while a measurement uses it. */
export async function deleteStack(db: Db, storage: ObjectStorage, actor: Actor, id: string) {
  requirePermission(actor, "stacks.delete");
  const row = await getStackRow(db, actor, id);
  await db.transaction(async (tx) => {
    const [used] = await tx
      .select({ id: measurements.id })
      .from(measurements)
      .where(eq(measurements.stackId, id))
      .limit(1);
    if (used) throw new AppError("conflict", "This stack is used by a measurement and cannot be deleted.");
    await tx.delete(stacks).where(eq(stacks.id, id));
    await insertAuditEntry(tx, {
      facilityId: actor.facilityId,
      userId: actor.userId,
      action: "stack.delete",
      targetType: "stack",
      targetId: id,
    });
  });
  await storage.delete(row.storageKey).catch(() => {});
  await deleteStackThumbnails(id).catch(() => {});
}

/** A row of the stack list: the stack, who uploaded it, and how many measurements use it. */
export interface StackListItem extends StackDto {
  uploadedByName: string | null;
  measurementCount: number;
}

/** The stacks the actor may see (a researcher: their own), newest first, with uploader and usage. */
export async function listStacksWithUsage(db: Db, actor: Actor): Promise<StackListItem[]> {
  requirePermission(actor, "stacks.upload");
  const rows = await listStacksWithUsageByFacility(db, {
    facilityId: actor.facilityId,
    uploadedBy: actor.role === "researcher" || actor.role === "engineer" ? actor.userId : undefined,
    limit: 200,
  });
  return rows.map((r) => ({
    ...toStackDto(r.stack),
    uploadedByName: r.uploadedByName,
    measurementCount: r.measurementCount,
  }));
}

/** One measurement that uses a stack, as the stack page lists it. */
export interface StackMeasurementItem {
  id: string;
  purpose: string;
  status: string;
  channel: number;
  version: number;
  acquiredAt: string;
  createdByName: string | null;
  objectiveName: string;
}

/**
 * Everything the stack page shows: the stack, its metadata record (each value with its source),
 * the uploader, and the measurements using it. `measurementCount` counts them all (it is why a
 * delete is refused); `measurements` lists only those the actor may open — the same rule as
 * reading a measurement (a researcher: not others' sample measurements; an engineer: assigned
 * instruments in the current visit only).
 */
export async function getStackDetail(db: Db, actor: Actor, id: string) {
  requirePermission(actor, "stacks.upload");
  const row = await getStackRow(db, actor, id);
  const [uploadedByName, used] = await Promise.all([
    getStackUploaderName(db, { userId: row.uploadedBy }),
    listMeasurementsByStack(db, { facilityId: actor.facilityId, stackId: row.id }),
  ]);
  let visible = used;
  if (actor.role === "researcher") {
    visible = used.filter((m) => m.purpose !== "sample" || m.createdBy === actor.userId);
  } else if (actor.role === "engineer") {
    const assigned = await listAssignedInstrumentIds(db, {
      facilityId: actor.facilityId,
      engineerId: actor.userId,
      at: new Date(),
    });
    visible = used.filter((m) => m.instrumentId != null && assigned.includes(m.instrumentId));
  }
  const measurementsDto: StackMeasurementItem[] = visible.map((m) => ({
    id: m.id,
    purpose: m.purpose,
    status: m.status,
    channel: m.channel,
    version: m.version,
    acquiredAt: m.acquiredAt.toISOString(),
    createdByName: m.createdByName,
    objectiveName: m.objectiveName,
  }));
  return {
    ...toStackDto(row),
    sampleType: row.sampleType,
    metadata: row.metadata as TiffMetadata | null,
    uploadedByName,
    measurementCount: used.length,
    measurements: measurementsDto,
  };
}
