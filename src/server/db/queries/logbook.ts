import { and, asc, eq, inArray } from "drizzle-orm";
import type { Db, Tx } from "../client";
import { logbookEvents, measurements, users } from "../schema";

type Q = Db | Tx;

/** Completed checks of an objective (not researchers' samples), oldest first. */
export async function listChecksByObjective(db: Q, { objectiveIds }: { objectiveIds: string[] }) {
  if (objectiveIds.length === 0) return [];
  return db
    .select({
      id: measurements.id,
      objectiveId: measurements.objectiveId,
      purpose: measurements.purpose,
      acquiredAt: measurements.acquiredAt,
      parentId: measurements.parentId,
      version: measurements.version,
      channel: measurements.channel,
      summary: measurements.summary,
      parameters: measurements.parameters,
    })
    .from(measurements)
    .where(
      and(
        inArray(measurements.objectiveId, objectiveIds),
        eq(measurements.status, "done"),
        inArray(measurements.purpose, ["routine", "baseline", "pre-service", "post-service"]),
      ),
    )
    .orderBy(asc(measurements.acquiredAt), asc(measurements.version));
}

export async function listEventsByObjective(db: Q, { objectiveIds }: { objectiveIds: string[] }) {
  if (objectiveIds.length === 0) return [];
  return db
    .select({
      id: logbookEvents.id,
      objectiveId: logbookEvents.objectiveId,
      kind: logbookEvents.kind,
      note: logbookEvents.note,
      occurredAt: logbookEvents.occurredAt,
      createdByName: users.name,
    })
    .from(logbookEvents)
    .leftJoin(users, eq(users.id, logbookEvents.createdBy))
    .where(inArray(logbookEvents.objectiveId, objectiveIds))
    .orderBy(asc(logbookEvents.occurredAt));
}

export async function insertLogbookEvent(db: Q, values: typeof logbookEvents.$inferInsert) {
  const [row] = await db.insert(logbookEvents).values(values).returning();
  return row!;
}
