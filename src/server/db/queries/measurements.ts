import { and, count, desc, eq, inArray, sql, type SQL, type SQLWrapper } from "drizzle-orm";
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
      summary: measurements.trendSummary,
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

/**
 * Keyset cursor of a measurement list, newest first: the row's acquired_at and created_at to
 * the microsecond (UTC) and its id. Opaque to callers; built by SQL so no precision is lost.
 */
const CURSOR_RE =
  /^(\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{6}Z)_(\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{6}Z)_([0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12})$/;

export function isMeasurementCursor(value: string): boolean {
  return CURSOR_RE.test(value);
}

const utcMicros = (col: SQLWrapper) =>
  sql`to_char(${col} at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"')`;

interface ListFilter {
  facilityId: string;
  createdBy?: string;
  objectiveIds?: string[];
}

function listConditions({ facilityId, createdBy, objectiveIds }: ListFilter): SQL[] {
  const conds: SQL[] = [eq(measurements.facilityId, facilityId)];
  if (createdBy) conds.push(eq(measurements.createdBy, createdBy));
  if (objectiveIds)
    conds.push(
      inArray(
        measurements.objectiveId,
        objectiveIds.length ? objectiveIds : ["00000000-0000-0000-0000-000000000000"],
      ),
    );
  return conds;
}

/**
 * One page of a facility's measurements, newest first (acquired, then created, then id), with
 * the objective, stack file and author names. `before` is the `cursor` of the last row of the
 * previous page (keyset pagination: a deep page costs what the first one does); an invalid
 * cursor throws a RangeError.
 */
export async function listRecentMeasurementsByFacility(
  db: Q,
  { limit, before, ...filter }: ListFilter & { limit: number; before?: string },
) {
  const conds = listConditions(filter);
  if (before) {
    const m = CURSOR_RE.exec(before);
    if (!m) throw new RangeError("before: not a measurement list cursor");
    conds.push(
      sql`(${measurements.acquiredAt}, ${measurements.createdAt}, ${measurements.id}) < (${m[1]}::timestamptz, ${m[2]}::timestamptz, ${m[3]}::uuid)`,
    );
  }
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
      cursor: sql<string>`${utcMicros(measurements.acquiredAt)} || '_' || ${utcMicros(measurements.createdAt)} || '_' || ${measurements.id}::text`,
    })
    .from(measurements)
    .innerJoin(objectives, eq(objectives.id, measurements.objectiveId))
    .innerJoin(stacks, eq(stacks.id, measurements.stackId))
    .leftJoin(users, eq(users.id, measurements.createdBy))
    .where(and(...conds))
    .orderBy(desc(measurements.acquiredAt), desc(measurements.createdAt), desc(measurements.id))
    .limit(limit);
}

/** How many measurements a list with these filters holds in all. */
export async function countMeasurements(db: Q, filter: ListFilter): Promise<number> {
  const [row] = await db
    .select({ n: count() })
    .from(measurements)
    .where(and(...listConditions(filter)));
  return row?.n ?? 0;
}
