import { and, eq, gte, lte } from "drizzle-orm";
import type { Db, Tx } from "../client";
import { serviceVisitInstruments, serviceVisits } from "../schema";

/** Instruments an engineer may see now: those on a visit whose window contains `at`. */
export async function listAssignedInstrumentIds(
  db: Db | Tx,
  { facilityId, engineerId, at }: { facilityId: string; engineerId: string; at: Date },
): Promise<string[]> {
  const rows = await db
    .select({ instrumentId: serviceVisitInstruments.instrumentId })
    .from(serviceVisits)
    .innerJoin(serviceVisitInstruments, eq(serviceVisitInstruments.visitId, serviceVisits.id))
    .where(
      and(
        eq(serviceVisits.facilityId, facilityId),
        eq(serviceVisits.engineerId, engineerId),
        lte(serviceVisits.startsAt, at),
        gte(serviceVisits.endsAt, at),
      ),
    );
  return [...new Set(rows.map((r) => r.instrumentId))];
}

export async function listServiceVisitsByFacility(
  db: Db | Tx,
  { facilityId, engineerId }: { facilityId: string; engineerId?: string },
) {
  const where = engineerId
    ? and(eq(serviceVisits.facilityId, facilityId), eq(serviceVisits.engineerId, engineerId))
    : eq(serviceVisits.facilityId, facilityId);
  return db.select().from(serviceVisits).where(where).orderBy(serviceVisits.startsAt);
}
