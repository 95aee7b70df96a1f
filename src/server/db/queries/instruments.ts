import { and, asc, eq, inArray } from "drizzle-orm";
import type { Db, Tx } from "../client";
import { instruments, objectives, type Instrument, type Objective } from "../schema";

type Q = Db | Tx;

export async function listInstrumentsByFacility(
  db: Q,
  { facilityId, onlyIds }: { facilityId: string; onlyIds?: string[] },
): Promise<Instrument[]> {
  const where = onlyIds
    ? and(
        eq(instruments.facilityId, facilityId),
        inArray(instruments.id, onlyIds.length ? onlyIds : ["00000000-0000-0000-0000-000000000000"]),
      )
    : eq(instruments.facilityId, facilityId);
  return db.select().from(instruments).where(where).orderBy(asc(instruments.name));
}

export async function getInstrumentById(db: Q, { facilityId, id }: { facilityId: string; id: string }) {
  const [row] = await db
    .select()
    .from(instruments)
    .where(and(eq(instruments.facilityId, facilityId), eq(instruments.id, id)))
    .limit(1);
  return row;
}

export async function insertInstrument(db: Q, values: typeof instruments.$inferInsert) {
  const [row] = await db.insert(instruments).values(values).returning();
  return row!;
}

export async function listObjectivesByFacility(
  db: Q,
  { facilityId, instrumentIds }: { facilityId: string; instrumentIds?: string[] },
): Promise<Objective[]> {
  const where = instrumentIds
    ? and(
        eq(objectives.facilityId, facilityId),
        inArray(
          objectives.instrumentId,
          instrumentIds.length ? instrumentIds : ["00000000-0000-0000-0000-000000000000"],
        ),
      )
    : eq(objectives.facilityId, facilityId);
  return db
    .select()
    .from(objectives)
    .where(where)
    .orderBy(asc(objectives.magnification), asc(objectives.name));
}

export async function getObjectiveById(db: Q, { facilityId, id }: { facilityId: string; id: string }) {
  const [row] = await db
    .select()
    .from(objectives)
    .where(and(eq(objectives.facilityId, facilityId), eq(objectives.id, id)))
    .limit(1);
  return row;
}

export async function insertObjective(db: Q, values: typeof objectives.$inferInsert) {
  const [row] = await db.insert(objectives).values(values).returning();
  return row!;
}

export async function updateObjective(
  db: Q,
  {
    facilityId,
    id,
    values,
  }: { facilityId: string; id: string; values: Partial<typeof objectives.$inferInsert> },
) {
  const [row] = await db
    .update(objectives)
    .set(values)
    .where(and(eq(objectives.facilityId, facilityId), eq(objectives.id, id)))
    .returning();
  return row;
}
