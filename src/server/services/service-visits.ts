import { eq, inArray } from "drizzle-orm";
import type { Db } from "../db/client";
import { instruments, serviceVisitInstruments, users } from "../db/schema";
import { listServiceVisitsByFacility } from "../db/queries/service-visits";
import type { Actor } from "../auth/permissions";
import { AppError } from "../http/errors";

/** Visits of the facility; an engineer sees only their own. */
export async function listServiceVisits(db: Db, actor: Actor) {
  if (actor.role === "researcher") throw new AppError("forbidden", "Researchers do not see service visits.");
  const visits = await listServiceVisitsByFacility(db, {
    facilityId: actor.facilityId,
    engineerId: actor.role === "engineer" ? actor.userId : undefined,
  });
  if (visits.length === 0) return [];
  const links = await db
    .select({ visitId: serviceVisitInstruments.visitId, name: instruments.name })
    .from(serviceVisitInstruments)
    .innerJoin(instruments, eq(instruments.id, serviceVisitInstruments.instrumentId))
    .where(
      inArray(
        serviceVisitInstruments.visitId,
        visits.map((v) => v.id),
      ),
    );
  const engineerIds = [...new Set(visits.map((v) => v.engineerId).filter((x): x is string => !!x))];
  const engineers = engineerIds.length
    ? await db.select({ id: users.id, name: users.name }).from(users).where(inArray(users.id, engineerIds))
    : [];
  return visits.map((v) => ({
    ...v,
    instrumentNames: links.filter((l) => l.visitId === v.id).map((l) => l.name),
    engineerName: engineers.find((e) => e.id === v.engineerId)?.name ?? null,
  }));
}
