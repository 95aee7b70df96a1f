import { and, desc, eq, sql, type SQL } from "drizzle-orm";
import type { Db, Tx } from "../client";
import { measurements, objectives, stacks, users } from "../schema";

type Q = Db | Tx;

/** A facility's stacks, newest first, with the uploader's name and how many measurements use each. */
export async function listStacksWithUsageByFacility(
  db: Q,
  { facilityId, uploadedBy, limit }: { facilityId: string; uploadedBy?: string; limit: number },
) {
  const conds: SQL[] = [eq(stacks.facilityId, facilityId)];
  if (uploadedBy) conds.push(eq(stacks.uploadedBy, uploadedBy));
  return db
    .select({
      stack: stacks,
      uploadedByName: users.name,
      measurementCount: sql<number>`(select count(*) from ${measurements} where ${measurements.stackId} = ${stacks.id})::int`,
    })
    .from(stacks)
    .leftJoin(users, eq(users.id, stacks.uploadedBy))
    .where(and(...conds))
    .orderBy(desc(stacks.createdAt))
    .limit(limit);
}

/** The uploader's display name of one stack (null when the account is gone). */
export async function getStackUploaderName(db: Q, { userId }: { userId: string | null }) {
  if (!userId) return null;
  const [row] = await db.select({ name: users.name }).from(users).where(eq(users.id, userId)).limit(1);
  return row?.name ?? null;
}

/** Every measurement that uses a stack, newest first, with its objective and author. */
export async function listMeasurementsByStack(
  db: Q,
  { facilityId, stackId }: { facilityId: string; stackId: string },
) {
  return db
    .select({
      id: measurements.id,
      purpose: measurements.purpose,
      status: measurements.status,
      channel: measurements.channel,
      version: measurements.version,
      acquiredAt: measurements.acquiredAt,
      createdBy: measurements.createdBy,
      createdByName: users.name,
      objectiveName: objectives.name,
      instrumentId: objectives.instrumentId,
    })
    .from(measurements)
    .innerJoin(objectives, eq(objectives.id, measurements.objectiveId))
    .leftJoin(users, eq(users.id, measurements.createdBy))
    .where(and(eq(measurements.facilityId, facilityId), eq(measurements.stackId, stackId)))
    .orderBy(desc(measurements.acquiredAt));
}
