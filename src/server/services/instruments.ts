/** Instruments and objectives of the actor's facility, with the engineer's visit-window restriction. */
import type { Db } from "../db/client";
import {
  getInstrumentById,
  getObjectiveById,
  insertInstrument,
  insertObjective,
  listInstrumentsByFacility,
  listObjectivesByFacility,
  updateObjective,
} from "../db/queries/instruments";
import { insertAuditEntry } from "../db/queries/audit";
import { listAssignedInstrumentIds } from "../db/queries/service-visits";
import { requirePermission, type Actor } from "../auth/permissions";
import { AppError, notFound } from "../http/errors";
import {
  DEFAULT_IMMERSION_RI,
  type CreateInstrument,
  type CreateObjective,
  type PatchObjective,
} from "../../contracts/instruments";

/** Instrument ids the actor may see, or undefined for "all of the facility". */
export async function visibleInstrumentIds(db: Db, actor: Actor): Promise<string[] | undefined> {
  const grant = requirePermission(actor, "instruments.read");
  if (grant === "assigned") {
    return listAssignedInstrumentIds(db, {
      facilityId: actor.facilityId,
      engineerId: actor.userId,
      at: new Date(),
    });
  }
  return undefined;
}

export async function listInstruments(db: Db, actor: Actor) {
  const onlyIds = await visibleInstrumentIds(db, actor);
  return listInstrumentsByFacility(db, { facilityId: actor.facilityId, onlyIds });
}

export async function getInstrument(db: Db, actor: Actor, id: string) {
  const onlyIds = await visibleInstrumentIds(db, actor);
  // Rows of another facility, or outside an engineer's assignment, are "not found":
  // we never confirm that an id exists elsewhere.
  if (onlyIds && !onlyIds.includes(id)) throw notFound("Instrument");
  const row = await getInstrumentById(db, { facilityId: actor.facilityId, id });
  if (!row) throw notFound("Instrument");
  return row;
}

export async function createInstrument(db: Db, actor: Actor, input: CreateInstrument) {
  requirePermission(actor, "instruments.manage");
  return db.transaction(async (tx) => {
    const row = await insertInstrument(tx, { ...input, facilityId: actor.facilityId });
    await insertAuditEntry(tx, {
      facilityId: actor.facilityId,
      userId: actor.userId,
      action: "instrument.create",
      targetType: "instrument",
      targetId: row.id,
    });
    return row;
  });
}

export async function listObjectives(db: Db, actor: Actor) {
  const onlyIds = await visibleInstrumentIds(db, actor);
  return listObjectivesByFacility(db, { facilityId: actor.facilityId, instrumentIds: onlyIds });
}

export async function getObjective(db: Db, actor: Actor, id: string) {
  const onlyIds = await visibleInstrumentIds(db, actor);
  const row = await getObjectiveById(db, { facilityId: actor.facilityId, id });
  if (!row || (onlyIds && (!row.instrumentId || !onlyIds.includes(row.instrumentId))))
    throw notFound("Objective");
  return row;
}

export async function createObjective(db: Db, actor: Actor, input: CreateObjective) {
  requirePermission(actor, "instruments.manage");
  return db.transaction(async (tx) => {
    if (input.instrumentId) {
      const inst = await getInstrumentById(tx, { facilityId: actor.facilityId, id: input.instrumentId });
      if (!inst) throw new AppError("unprocessable", "The instrument does not exist in this facility.");
    }
    const row = await insertObjective(tx, {
      ...input,
      instrumentId: input.instrumentId ?? null,
      designImmersionRi: input.designImmersionRi ?? DEFAULT_IMMERSION_RI[input.immersion],
      facilityId: actor.facilityId,
    });
    await insertAuditEntry(tx, {
      facilityId: actor.facilityId,
      userId: actor.userId,
      action: "objective.create",
      targetType: "objective",
      targetId: row.id,
    });
    return row;
  });
}

export async function patchObjective(db: Db, actor: Actor, id: string, input: PatchObjective) {
  // Tolerances are admin-only; other fields need instrument management rights.
  const touchesTolerances = input.lateralRatioLimit !== undefined || input.axialRatioLimit !== undefined;
  requirePermission(actor, touchesTolerances ? "tolerances.manage" : "instruments.manage");
  return db.transaction(async (tx) => {
    if (input.instrumentId) {
      const inst = await getInstrumentById(tx, { facilityId: actor.facilityId, id: input.instrumentId });
      if (!inst) throw new AppError("unprocessable", "The instrument does not exist in this facility.");
    }
    const old = await getObjectiveById(tx, { facilityId: actor.facilityId, id });
    if (!old) throw notFound("Objective");
    const row = await updateObjective(tx, { facilityId: actor.facilityId, id, values: input });
    if (!row) throw notFound("Objective");
    // "From what to what" for the audit log: only the fields this request changed.
    const before: Record<string, unknown> = {};
    const after: Record<string, unknown> = {};
    for (const key of Object.keys(input) as Array<keyof PatchObjective>) {
      if (input[key] === undefined || old[key] === row[key]) continue;
      before[key] = old[key];
      after[key] = row[key];
    }
    await insertAuditEntry(tx, {
      facilityId: actor.facilityId,
      userId: actor.userId,
      action: "objective.update",
      targetType: "objective",
      targetId: id,
      details: { before, after },
    });
    return row;
  });
}
