import { and, desc, eq, inArray } from "drizzle-orm";
import type { Db, Tx } from "../client";
import { measurements, objectives, stacks, users } from "../schema";

type Q = Db | Tx;

/** Latest completed check (not a researcher's sample) per objective. */
export async function listLatestChecksByObjectives(db: Q, { objectiveIds }: { objectiveIds: string[] }) {
  if (objectiveIds.length === 0) return [];
  return db
    .selectDistinctOn([measurements.objectiveId], {
      objectiveId: measurements.objectiveId,
      id: measurements.id,
      acquiredAt: measurements.acquiredAt,
      summary: measurements.summary,
    })
    .from(measurements)
    .where(
      and(
        inArray(measurements.objectiveId, objectiveIds),
        eq(measurements.status, "done"),
        inArray(measurements.purpose, ["routine", "baseline", "post-service", "pre-service"]),
      ),
    )
    .orderBy(measurements.objectiveId, desc(measurements.acquiredAt));
}

export async function listRecentMeasurementsByFacility(
  db: Q,
  {
    facilityId,
    limit,
    createdBy,
    objectiveIds,
  }: { facilityId: string; limit: number; createdBy?: string; objectiveIds?: string[] },
) {
  const conds = [eq(measurements.facilityId, facilityId)];
  if (createdBy) conds.push(eq(measurements.createdBy, createdBy));
  if (objectiveIds)
    conds.push(
      inArray(
        measurements.objectiveId,
        objectiveIds.length ? objectiveIds : ["00000000-0000-0000-0000-000000000000"],
      ),
    );
  return db
    .select({
      id: measurements.id,
      purpose: measurements.purpose,
      status: measurements.status,
      acquiredAt: measurements.acquiredAt,
      createdAt: measurements.createdAt,
      objectiveName: objectives.name,
      fileName: stacks.fileName,
      createdByName: users.name,
      summary: measurements.summary,
    })
    .from(measurements)
    .innerJoin(objectives, eq(objectives.id, measurements.objectiveId))
    .innerJoin(stacks, eq(stacks.id, measurements.stackId))
    .leftJoin(users, eq(users.id, measurements.createdBy))
    .where(and(...conds))
    .orderBy(desc(measurements.acquiredAt), desc(measurements.createdAt))
    .limit(limit);
}
