/** Ids of the invented demo facility's rows, read from the database (tests create what else they need). */
import { randomUUID } from "node:crypto";
import { and, eq, gte, lte } from "drizzle-orm";
import { getDb } from "@/server/db/client";
import { facilities, instruments, memberships, objectives, serviceVisits, users } from "@/server/db/schema";
import { createApiToken } from "@/server/services/api-tokens";
import { DEMO_FACILITY } from "@/server/services/demo-data";

export async function demoFacilityId(): Promise<string> {
  const [f] = await getDb().select().from(facilities).where(eq(facilities.slug, DEMO_FACILITY.slug));
  return f!.id;
}

/** The demo facility's objective with exactly this name, e.g. "60× / 1.20 water". */
export async function demoObjective(name: string) {
  const [o] = await getDb()
    .select()
    .from(objectives)
    .where(and(eq(objectives.facilityId, await demoFacilityId()), eq(objectives.name, name)))
    .orderBy(objectives.createdAt)
    .limit(1);
  if (!o) throw new Error(`demo objective ${name} not found`);
  return o;
}

/** The demo facility's instrument with exactly this name. */
export async function demoInstrument(name: string) {
  const [i] = await getDb()
    .select()
    .from(instruments)
    .where(and(eq(instruments.facilityId, await demoFacilityId()), eq(instruments.name, name)))
    .orderBy(instruments.createdAt)
    .limit(1);
  if (!i) throw new Error(`demo instrument ${name} not found`);
  return i;
}

/** The demo engineer's current service visit (the seed plans one around today; older ones are past). */
export async function demoEngineerVisitId(): Promise<string> {
  const [engineer] = await getDb().select().from(users).where(eq(users.email, "engineer@larkspur.example"));
  const [v] = await getDb()
    .select()
    .from(serviceVisits)
    .where(
      and(
        eq(serviceVisits.facilityId, await demoFacilityId()),
        eq(serviceVisits.engineerId, engineer!.id),
        lte(serviceVisits.startsAt, new Date()),
        gte(serviceVisits.endsAt, new Date()),
      ),
    )
    .orderBy(serviceVisits.startsAt)
    .limit(1);
  if (!v) throw new Error("the demo engineer has no current service visit");
  return v.id;
}

/**
 * A second, invented facility with one admin and an API token for that admin:
 * every row of the demo facility must be invisible to it.
 */
export async function otherFacilityToken(): Promise<string> {
  const tag = randomUUID().slice(0, 8);
  const db = getDb();
  const [f] = await db
    .insert(facilities)
    .values({ name: `Harrow Fen Microscopy (e2e ${tag})`, slug: `e2e-other-${tag}` })
    .returning();
  const [u] = await db
    .insert(users)
    .values({ email: `admin-${tag}@harrowfen.example`, name: "Tamsin Reed" })
    .returning();
  await db.insert(memberships).values({ facilityId: f!.id, userId: u!.id, role: "admin" });
  const { token } = await createApiToken(
    db,
    { userId: u!.id, facilityId: f!.id, role: "admin", via: "token" },
    { name: "e2e other facility" },
  );
  return token;
}
