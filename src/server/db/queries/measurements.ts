import { and, count, desc, eq, inArray, ne, or, sql, type SQL, type SQLWrapper } from "drizzle-orm";
import type { Db, Tx } from "../client";
import { measurements, objectives, stacks, users, type Measurement } from "../schema";

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

/** A real instant PostgreSQL accepts: no 30 February, no hour 24, no year 0. */
function isCursorInstant(iso: string): boolean {
  const t = Date.parse(iso);
  return !Number.isNaN(t) && new Date(t).toISOString() === `${iso.slice(0, 23)}Z` && iso >= "0001";
}

/** The cursor's parts, or null when it is not one a measurement list gave out. */
function parseCursor(value: string): [acquiredAt: string, createdAt: string, id: string] | null {
  const m = CURSOR_RE.exec(value);
  if (!m || !isCursorInstant(m[1]!) || !isCursorInstant(m[2]!)) return null;
  return [m[1]!, m[2]!, m[3]!];
}

export function isMeasurementCursor(value: string): boolean {
  return parseCursor(value) !== null;
}

const utcMicros = (col: SQLWrapper) =>
  sql`to_char(${col} at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"')`;

const NO_ID = "00000000-0000-0000-0000-000000000000";

interface ListFilter {
  facilityId: string;
  createdBy?: string;
  objectiveIds?: string[];
  /** Only measurements of objectives currently mounted on one of these instruments. */
  instrumentIds?: string[];
  /** Every non-sample measurement, but sample ones only when this user created them. */
  samplesOf?: string;
  purpose?: Measurement["purpose"];
  status?: Measurement["status"];
}

function listConditions({
  facilityId,
  createdBy,
  objectiveIds,
  instrumentIds,
  samplesOf,
  purpose,
  status,
}: ListFilter): SQL[] {
  const conds: SQL[] = [eq(measurements.facilityId, facilityId)];
  if (createdBy) conds.push(eq(measurements.createdBy, createdBy));
  if (objectiveIds)
    conds.push(inArray(measurements.objectiveId, objectiveIds.length ? objectiveIds : [NO_ID]));
  if (instrumentIds)
    conds.push(
      inArray(
        measurements.objectiveId,
        sql`(select ${objectives.id} from ${objectives} where ${inArray(
          objectives.instrumentId,
          instrumentIds.length ? instrumentIds : [NO_ID],
        )})`,
      ),
    );
  if (samplesOf) conds.push(or(ne(measurements.purpose, "sample"), eq(measurements.createdBy, samplesOf))!);
  if (purpose) conds.push(eq(measurements.purpose, purpose));
  if (status) conds.push(eq(measurements.status, status));
  return conds;
}

/** Rows strictly after the cursor's row in newest-first order; a RangeError for a bad cursor. */
function beforeCondition(before: string): SQL {
  const c = parseCursor(before);
  if (!c) throw new RangeError("before: not a measurement list cursor");
  return sql`(${measurements.acquiredAt}, ${measurements.createdAt}, ${measurements.id}) < (${c[0]}::timestamptz, ${c[1]}::timestamptz, ${c[2]}::uuid)`;
}

const cursorOf = () =>
  sql<string>`${utcMicros(measurements.acquiredAt)} || '_' || ${utcMicros(measurements.createdAt)} || '_' || ${measurements.id}::text`;
const newestFirst = [desc(measurements.acquiredAt), desc(measurements.createdAt), desc(measurements.id)];

/**
 * One page of a facility's measurements, newest first (acquired, then created, then id), with
 * the objective, stack file and author names, and the headline ratios and verdict level read
 * from `trend_summary` (~1 kB), never `summary` (~90 kB). `before` is the `cursor` of the last
 * row of the previous page (keyset pagination: a deep page costs what the first one does); an
 * invalid cursor throws a RangeError. Serves the dashboard, the objective page and the API list.
 */
export async function listMeasurementPage(
  db: Q,
  { limit, before, ...filter }: ListFilter & { limit: number; before?: string },
) {
  const conds = listConditions(filter);
  if (before) conds.push(beforeCondition(before));
  return db
    .select({
      id: measurements.id,
      objectiveId: measurements.objectiveId,
      objectiveName: objectives.name,
      stackId: measurements.stackId,
      fileName: stacks.fileName,
      purpose: measurements.purpose,
      status: measurements.status,
      acquiredAt: measurements.acquiredAt,
      createdAt: measurements.createdAt,
      finishedAt: measurements.finishedAt,
      version: measurements.version,
      createdByName: users.name,
      ratios: sql<{
        lateral?: number | null;
        axial?: number | null;
      } | null>`${measurements.trendSummary} -> 'ratios'`,
      verdictLevel: sql<string | null>`${measurements.trendSummary} #>> '{verdict,level}'`,
      cursor: cursorOf(),
    })
    .from(measurements)
    .innerJoin(objectives, eq(objectives.id, measurements.objectiveId))
    .innerJoin(stacks, eq(stacks.id, measurements.stackId))
    .leftJoin(users, eq(users.id, measurements.createdBy))
    .where(and(...conds))
    .orderBy(...newestFirst)
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
