import { and, asc, eq, inArray, sql } from "drizzle-orm";
import type { Db, Tx } from "../client";
import { logbookEvents, measurements, users } from "../schema";

type Q = Db | Tx;

/**
 * Completed checks of an objective (not researchers' samples), oldest first. `summary` is the
 * small generated `trend_summary` (ratios, headline, widths medians, theory, beads, verdict
 * level, engine version), not the full ~90 kB record: trends read thousands of these. With
 * `ratiosOnly`, `summary` holds only `ratios` and `parameters` is null — all a status needs,
 * for the dashboard, which reads every check of the facility.
 */
export async function listChecksByObjective(
  db: Q,
  { objectiveIds, ratiosOnly = false }: { objectiveIds: string[]; ratiosOnly?: boolean },
) {
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
      summary: ratiosOnly
        ? sql<unknown>`jsonb_build_object('ratios', ${measurements.trendSummary} -> 'ratios')`
        : measurements.trendSummary,
      parameters: ratiosOnly ? sql<unknown>`null` : measurements.parameters,
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
