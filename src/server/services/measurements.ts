/**
 * Measurements: create (checks the role for the purpose, resolves the medium's RI,
 * queues the analysis), read with progress and results, cancel, re-run as a new
 * version, and the bead table.
 */
import { and, asc, eq, gt } from "drizzle-orm";
import type { Modality } from "../../lib/optics";
import type { MeasurementParameters } from "../../lib/psf/run-measurement-pipeline";
import type { VerdictLevel } from "../../lib/qc";
import type { CreateMeasurement, MeasurementListQuery, RerunMeasurement } from "../../contracts/measurements";
import type { Db } from "../db/client";
import {
  beadResults,
  instruments,
  logbookEvents,
  measurements,
  objectives,
  type BeadResult,
  type Measurement,
} from "../db/schema";
import { insertAuditEntry } from "../db/queries/audit";
import { isMeasurementCursor, listMeasurementPage } from "../db/queries/measurements";
import { listAssignedInstrumentIds } from "../db/queries/service-visits";
import { requirePermission, type Actor, type Permission } from "../auth/permissions";
import { AppError, notFound } from "../http/errors";
import { enqueueAnalysis } from "../queue/boss";
import { getStackRow } from "./stacks";
import { getObjective } from "./instruments";
import { resolveMediumRi } from "./media";
import { getVisitRow } from "./service-visits";

/** Everything the worker needs, stored on the row (provenance and re-runs). */
export interface StoredParameters extends MeasurementParameters {
  mediumId: string | null;
  mediumName: string;
  temperatureC: number | null;
  objectiveName: string;
  limits: { lateral: number; axial: number };
}

const PURPOSE_PERMISSION: Record<CreateMeasurement["purpose"], Permission> = {
  routine: "measurements.routine",
  baseline: "measurements.routine",
  "pre-service": "measurements.service",
  "post-service": "measurements.service",
  sample: "measurements.sample",
};

async function resolveSampleRi(db: Db, actor: Actor, input: CreateMeasurement, immersionRi: number) {
  if (input.sampleRi === undefined && !input.mediumId) {
    // A bead slide checked by the facility is assumed matched to the lens (common practice).
    return { sampleRi: immersionRi, mediumId: null, mediumName: "matched to the immersion medium" };
  }
  return resolveMediumRi(db, actor, {
    mediumId: input.mediumId,
    sampleRi: input.sampleRi,
    wavelengthNm: input.emissionWavelengthNm,
    temperatureC: input.temperatureC,
  });
}

export async function createMeasurement(db: Db, actor: Actor, input: CreateMeasurement) {
  const grant = requirePermission(actor, PURPOSE_PERMISSION[input.purpose]);
  const stack = await getStackRow(db, actor, input.stackId);
  const objective = await getObjective(db, actor, input.objectiveId);
  if (grant === "own" && stack.uploadedBy !== actor.userId) {
    throw new AppError("forbidden", "Researchers run sample measurements on their own stacks only.");
  }
  if (grant === "assigned") {
    const assigned = await listAssignedInstrumentIds(db, {
      facilityId: actor.facilityId,
      engineerId: actor.userId,
      at: new Date(),
    });
    if (!objective.instrumentId || !assigned.includes(objective.instrumentId)) {
      throw new AppError(
        "forbidden",
        "This objective is not on an instrument of your current service visit.",
      );
    }
  }
  // The visit named must be one the actor can see (own facility; an engineer's own visit).
  if (input.serviceVisitId) await getVisitRow(db, actor, input.serviceVisitId);
  if (input.channel >= stack.channels) {
    throw new AppError(
      "unprocessable",
      `The stack has ${stack.channels} channel(s); channel ${input.channel} does not exist (0-based).`,
    );
  }
  if (input.coverslipSlice !== undefined && input.coverslipSlice >= stack.slices) {
    throw new AppError(
      "unprocessable",
      `The stack has ${stack.slices} slices; coverslip slice ${input.coverslipSlice} is outside it.`,
    );
  }
  const voxel =
    input.voxelSizeUm ??
    (stack.voxelXUm && stack.voxelYUm && stack.voxelZUm
      ? { x: stack.voxelXUm, y: stack.voxelYUm, z: stack.voxelZUm }
      : null);
  if (!voxel) {
    throw new AppError(
      "unprocessable",
      "The stack has no voxel size in its metadata: send voxelSizeUm {x, y, z} in µm.",
    );
  }
  let modality: Modality | undefined = input.modality;
  if (!modality && objective.instrumentId) {
    const [inst] = await db
      .select()
      .from(instruments)
      .where(eq(instruments.id, objective.instrumentId))
      .limit(1);
    modality = inst?.modality;
  }
  if (!modality)
    throw new AppError("unprocessable", "Give the modality: the objective is not mounted on an instrument.");
  const medium = await resolveSampleRi(db, actor, input, objective.designImmersionRi);

  const parameters: StoredParameters = {
    channel: input.channel,
    modality,
    na: objective.na,
    immersionRi: objective.designImmersionRi,
    sampleRi: medium.sampleRi,
    emissionWavelengthNm: input.emissionWavelengthNm,
    excitationWavelengthNm: input.excitationWavelengthNm,
    pinholeAu: input.pinholeAu,
    beadDiameterNm: input.beadDiameterNm,
    voxelSizeUm: input.voxelSizeUm,
    coverslipSlice: input.coverslipSlice,
    designCoverslipUm: objective.designCoverslipUm,
    thresholdK: input.thresholdK,
    mediumId: medium.mediumId,
    mediumName: medium.mediumName,
    temperatureC: input.temperatureC ?? null,
    objectiveName: objective.name,
    limits: { lateral: objective.lateralRatioLimit, axial: objective.axialRatioLimit },
  };
  const row = await db.transaction(async (tx) => {
    const [m] = await tx
      .insert(measurements)
      .values({
        facilityId: actor.facilityId,
        stackId: stack.id,
        objectiveId: objective.id,
        createdBy: actor.userId,
        purpose: input.purpose,
        channel: input.channel,
        modality,
        parameters,
        serviceVisitId: input.serviceVisitId ?? null,
        acquiredAt: input.acquiredAt ? new Date(input.acquiredAt) : stack.createdAt,
      })
      .returning();
    await insertAuditEntry(tx, {
      facilityId: actor.facilityId,
      userId: actor.userId,
      action: "measurement.create",
      targetType: "measurement",
      targetId: m!.id,
    });
    return m!;
  });
  await queueOrFail(db, row.id);
  return { id: row.id, status: row.status };
}

async function queueOrFail(db: Db, id: string) {
  try {
    await enqueueAnalysis(id);
  } catch (err) {
    await db
      .update(measurements)
      .set({
        status: "failed",
        errorCode: "queue_unavailable",
        errorMessage: "The analysis queue is unavailable. Try again.",
      })
      .where(eq(measurements.id, id));
    throw new AppError("unavailable", "The analysis queue is unavailable right now. Try again in a moment.", {
      cause: err,
    });
  }
}

/** One measurement the actor may see, else 404. `listMeasurements` filters the same way: keep them in step. */
export async function getMeasurementRow(db: Db, actor: Actor, id: string): Promise<Measurement> {
  const [row] = await db
    .select()
    .from(measurements)
    .where(and(eq(measurements.facilityId, actor.facilityId), eq(measurements.id, id)))
    .limit(1);
  if (!row) throw notFound("Measurement");
  if (actor.role === "researcher" && row.purpose === "sample" && row.createdBy !== actor.userId)
    throw notFound("Measurement");
  if (actor.role === "engineer") {
    const [obj] = await db.select().from(objectives).where(eq(objectives.id, row.objectiveId)).limit(1);
    const assigned = await listAssignedInstrumentIds(db, {
      facilityId: actor.facilityId,
      engineerId: actor.userId,
      at: new Date(),
    });
    if (!obj?.instrumentId || !assigned.includes(obj.instrumentId)) throw notFound("Measurement");
  }
  return row;
}

export async function getMeasurement(db: Db, actor: Actor, id: string) {
  const row = await getMeasurementRow(db, actor, id);
  return {
    id: row.id,
    stackId: row.stackId,
    objectiveId: row.objectiveId,
    purpose: row.purpose,
    status: row.status,
    progress: { stage: row.stage, fraction: row.fraction },
    error: row.errorCode ? { code: row.errorCode, message: row.errorMessage } : null,
    version: row.version,
    parentId: row.parentId,
    parameters: row.parameters as StoredParameters,
    acquiredAt: row.acquiredAt.toISOString(),
    createdAt: row.createdAt.toISOString(),
    finishedAt: row.finishedAt?.toISOString() ?? null,
    engineVersion: row.engineVersion,
    formulaId: row.formulaId,
    summary: row.status === "done" ? row.summary : null,
  };
}

/**
 * One page of the measurements the actor may see, newest first (`GET /api/v1/measurements`).
 * Visibility is `getMeasurementRow`'s, as filters in SQL: the actor's facility only; a
 * researcher sees every non-sample measurement and their own sample ones; an engineer only
 * measurements of objectives on the instruments of their current visit. An `objectiveId` the
 * actor cannot see simply matches nothing, so the answer never tells whether it exists.
 * `next` is the cursor to pass as `before` for the following page, null on the last.
 */
export async function listMeasurements(db: Db, actor: Actor, query: MeasurementListQuery) {
  requirePermission(actor, "logbooks.read");
  if (query.before !== undefined && !isMeasurementCursor(query.before)) {
    throw new AppError(
      "bad_request",
      "before: not a cursor of this list. Pass the `next` value of the previous page unchanged, or leave it out for the first page.",
    );
  }
  const instrumentIds =
    actor.role === "engineer"
      ? await listAssignedInstrumentIds(db, {
          facilityId: actor.facilityId,
          engineerId: actor.userId,
          at: new Date(),
        })
      : undefined;
  const rows = await listMeasurementPage(db, {
    facilityId: actor.facilityId,
    objectiveIds: query.objectiveId ? [query.objectiveId] : undefined,
    instrumentIds,
    samplesOf: actor.role === "researcher" ? actor.userId : undefined,
    purpose: query.purpose,
    status: query.status,
    limit: query.limit + 1,
    before: query.before,
  });
  const page = rows.slice(0, query.limit);
  return {
    measurements: page.map((r) => {
      const done = r.status === "done";
      return {
        id: r.id,
        objectiveId: r.objectiveId,
        objectiveName: r.objectiveName,
        stackId: r.stackId,
        fileName: r.fileName,
        purpose: r.purpose,
        status: r.status,
        acquiredAt: r.acquiredAt.toISOString(),
        createdAt: r.createdAt.toISOString(),
        finishedAt: r.finishedAt?.toISOString() ?? null,
        version: r.version,
        createdByName: r.createdByName,
        ratios:
          done && r.ratios ? { lateral: r.ratios.lateral ?? null, axial: r.ratios.axial ?? null } : null,
        verdict: done ? ((r.verdictLevel as VerdictLevel | null) ?? null) : null,
      };
    }),
    next: rows.length > query.limit ? page.at(-1)!.cursor : null,
  };
}

/**
 * A measurement's beads by id. Without `page`, every bead (the CSV export); with it, at most
 * `limit` beads whose id is greater than `after`, and `next` to pass as `after` for the rest.
 */
export async function listBeads(db: Db, actor: Actor, id: string): Promise<BeadResult[]>;
export async function listBeads(
  db: Db,
  actor: Actor,
  id: string,
  page: { limit: number; after?: number },
): Promise<{ beads: BeadResult[]; next: number | null }>;
export async function listBeads(db: Db, actor: Actor, id: string, page?: { limit: number; after?: number }) {
  await getMeasurementRow(db, actor, id);
  const where =
    page?.after !== undefined
      ? and(eq(beadResults.measurementId, id), gt(beadResults.beadIndex, page.after))
      : eq(beadResults.measurementId, id);
  const query = db.select().from(beadResults).where(where).orderBy(asc(beadResults.beadIndex));
  if (!page) return query;
  const rows = await query.limit(page.limit + 1);
  const beads = rows.slice(0, page.limit);
  return { beads, next: rows.length > page.limit ? beads.at(-1)!.beadIndex : null };
}

export async function cancelMeasurement(db: Db, actor: Actor, id: string) {
  const row = await getMeasurementRow(db, actor, id);
  requirePermission(actor, PURPOSE_PERMISSION[row.purpose]);
  if (row.status !== "queued" && row.status !== "running") {
    throw new AppError("conflict", `The measurement is already ${row.status}.`);
  }
  await db
    .update(measurements)
    .set({ status: "cancelled", stage: "cancelled", finishedAt: new Date() })
    .where(eq(measurements.id, id));
  return { id, status: "cancelled" as const };
}

/** Re-run with changed parameters: a new version row; the old one is kept untouched. */
export async function rerunMeasurement(db: Db, actor: Actor, id: string, input: RerunMeasurement) {
  const row = await getMeasurementRow(db, actor, id);
  requirePermission(actor, PURPOSE_PERMISSION[row.purpose]);
  if (row.status === "queued" || row.status === "running") {
    throw new AppError("conflict", "Wait for the current run to finish or cancel it first.");
  }
  const old = row.parameters as StoredParameters;
  const parameters: StoredParameters = {
    ...old,
    thresholdK: input.thresholdK ?? old.thresholdK,
    coverslipSlice: input.coverslipSlice === null ? undefined : (input.coverslipSlice ?? old.coverslipSlice),
    excludedBeadIds: input.excludedBeadIds ?? old.excludedBeadIds,
    beadDiameterNm: input.beadDiameterNm ?? old.beadDiameterNm,
  };
  const rootId = row.parentId ?? row.id;
  const created = await db.transaction(async (tx) => {
    const versions = await tx
      .select({ v: measurements.version })
      .from(measurements)
      .where(eq(measurements.parentId, rootId));
    const next = Math.max(row.version, ...versions.map((v) => v.v)) + 1;
    const [m] = await tx
      .insert(measurements)
      .values({
        facilityId: row.facilityId,
        stackId: row.stackId,
        objectiveId: row.objectiveId,
        createdBy: actor.userId,
        purpose: row.purpose,
        channel: row.channel,
        modality: row.modality,
        parameters,
        version: next,
        parentId: rootId,
        serviceVisitId: row.serviceVisitId,
        acquiredAt: row.acquiredAt,
      })
      .returning();
    await insertAuditEntry(tx, {
      facilityId: actor.facilityId,
      userId: actor.userId,
      action: "measurement.rerun",
      targetType: "measurement",
      targetId: m!.id,
      details: { from: id, changes: input },
    });
    return m!;
  });
  await queueOrFail(db, created.id);
  return { id: created.id, status: created.status, version: created.version };
}

/**
 * Make a finished check the start of a new baseline epoch: its purpose becomes
 * "baseline" and a baseline event is logged just before its acquisition time.
 */
export async function markAsBaseline(db: Db, actor: Actor, id: string) {
  requirePermission(actor, "baselines.manage");
  const row = await getMeasurementRow(db, actor, id);
  if (row.status !== "done")
    throw new AppError("conflict", "Only a finished measurement can become a baseline.");
  if (row.purpose === "sample")
    throw new AppError("unprocessable", "A researcher's sample measurement cannot be an objective baseline.");
  await db.transaction(async (tx) => {
    await tx.update(measurements).set({ purpose: "baseline" }).where(eq(measurements.id, id));
    await tx.insert(logbookEvents).values({
      facilityId: actor.facilityId,
      objectiveId: row.objectiveId,
      kind: "baseline_start",
      note: "Marked as the baseline of a new epoch.",
      occurredAt: new Date(row.acquiredAt.getTime() - 1000),
      createdBy: actor.userId,
    });
    await insertAuditEntry(tx, {
      facilityId: actor.facilityId,
      userId: actor.userId,
      action: "measurement.baseline",
      targetType: "measurement",
      targetId: id,
    });
  });
  return { id, purpose: "baseline" as const };
}
