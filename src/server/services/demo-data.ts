/**
 * Idempotent demo data: an invented facility, one person per role, three
 * instruments of different modalities and six objectives. Invented scenario only —
 * no real people, products or brands. Safe to run on every start.
 */
import { and, eq } from "drizzle-orm";
import type { Db } from "../db/client";
import {
  facilities,
  instruments,
  media,
  memberships,
  objectives,
  serviceVisitInstruments,
  serviceVisits,
  users,
} from "../db/schema";
import type { Role } from "../auth/permissions";
import { hashPassword } from "./sign-in";

export const DEMO_FACILITY = { name: "Larkspur Institute Imaging Core", slug: "larkspur-imaging" };

export const DEMO_PEOPLE: Array<{ role: Role; name: string; email: string }> = [
  { role: "admin", name: "Ilse Marrow", email: "admin@larkspur.example" },
  { role: "staff", name: "Jonah Fitch", email: "staff@larkspur.example" },
  { role: "researcher", name: "Nadia Brook", email: "researcher@larkspur.example" },
  { role: "engineer", name: "Oren Vale", email: "engineer@larkspur.example" },
];

const DEMO_INSTRUMENTS = [
  {
    key: "confocal",
    name: "Confocal North (room 2.14)",
    modality: "confocal",
    stand: "inverted",
    serialNumber: "LIC-CF-0192",
    location: "Room 2.14",
    defaultPinholeAu: 1,
  },
  {
    key: "widefield",
    name: "Widefield East (room 2.09)",
    modality: "widefield",
    stand: "inverted",
    serialNumber: "LIC-WF-0077",
    location: "Room 2.09",
    defaultPinholeAu: null,
  },
  {
    key: "spinning",
    name: "Spinning disk West (room 3.02)",
    modality: "spinning-disk",
    stand: "inverted",
    serialNumber: "LIC-SD-0311",
    location: "Room 3.02",
    defaultPinholeAu: null,
  },
] as const;

const DEMO_OBJECTIVES = [
  {
    on: "widefield",
    name: "40× / 0.95 air",
    magnification: 40,
    na: 0.95,
    immersion: "air",
    designImmersionRi: 1.0,
    serialNumber: "OBJ-A40-3301",
    correctionCollar: "0.17 mm",
  },
  {
    on: "confocal",
    name: "60× / 1.20 water",
    magnification: 60,
    na: 1.2,
    immersion: "water",
    designImmersionRi: 1.333,
    serialNumber: "OBJ-W60-1187",
    correctionCollar: "0.17 mm",
  },
  {
    on: "confocal",
    name: "63× / 1.30 glycerol",
    magnification: 63,
    na: 1.3,
    immersion: "glycerol",
    designImmersionRi: 1.46,
    serialNumber: "OBJ-G63-0452",
    correctionCollar: "n 1.46",
  },
  {
    on: "spinning",
    name: "60× / 1.35 silicone",
    magnification: 60,
    na: 1.35,
    immersion: "silicone",
    designImmersionRi: 1.406,
    serialNumber: "OBJ-S60-2210",
    correctionCollar: "23 °C",
  },
  {
    on: "confocal",
    name: "63× / 1.40 oil",
    magnification: 63,
    na: 1.4,
    immersion: "oil",
    designImmersionRi: 1.518,
    serialNumber: "OBJ-O63-0908",
    correctionCollar: null,
  },
  {
    on: "widefield",
    name: "100× / 1.45 oil",
    magnification: 100,
    na: 1.45,
    immersion: "oil",
    designImmersionRi: 1.518,
    serialNumber: "OBJ-O100-5521",
    correctionCollar: null,
  },
] as const;

export async function seedDemoData(db: Db, passwords: Record<Role, string>) {
  return db.transaction(async (tx) => {
    // Insert once, then read: an upsert would rewrite the row (and its updated_at) on every start.
    await tx
      .insert(facilities)
      .values({ ...DEMO_FACILITY, timezone: "Europe/London" })
      .onConflictDoNothing({ target: facilities.slug });
    const [facility] = await tx.select().from(facilities).where(eq(facilities.slug, DEMO_FACILITY.slug));
    const facilityId = facility!.id;

    const userIds: Partial<Record<Role, string>> = {};
    for (const p of DEMO_PEOPLE) {
      const [existing] = await tx.select().from(users).where(eq(users.email, p.email)).limit(1);
      let id = existing?.id;
      if (!existing) {
        const [row] = await tx
          .insert(users)
          .values({ email: p.email, name: p.name, passwordHash: await hashPassword(passwords[p.role]) })
          .returning();
        id = row!.id;
      }
      userIds[p.role] = id!;
      await tx
        .insert(memberships)
        .values({ facilityId, userId: id!, role: p.role })
        .onConflictDoNothing({ target: [memberships.facilityId, memberships.userId] });
    }

    const instrumentIds: Record<string, string> = {};
    for (const i of DEMO_INSTRUMENTS) {
      const [existing] = await tx
        .select()
        .from(instruments)
        .where(and(eq(instruments.facilityId, facilityId), eq(instruments.serialNumber, i.serialNumber)))
        .limit(1);
      const { key, ...values } = i;
      instrumentIds[key] =
        existing?.id ??
        (
          await tx
            .insert(instruments)
            .values({ ...values, facilityId })
            .returning()
        )[0]!.id;
    }

    for (const o of DEMO_OBJECTIVES) {
      const [existing] = await tx
        .select()
        .from(objectives)
        .where(and(eq(objectives.facilityId, facilityId), eq(objectives.serialNumber, o.serialNumber)))
        .limit(1);
      if (existing) continue;
      const { on, ...values } = o;
      await tx.insert(objectives).values({ ...values, facilityId, instrumentId: instrumentIds[on]! });
    }

    const [medium] = await tx
      .select()
      .from(media)
      .where(and(eq(media.facilityId, facilityId), eq(media.name, "Core mounting gel, batch 7")))
      .limit(1);
    if (!medium) {
      await tx.insert(media).values({
        facilityId,
        name: "Core mounting gel, batch 7",
        refractiveIndex: 1.42,
        referenceWavelengthNm: 589.3,
        notes: "Measured on the core's refractometer at 21 °C (invented demo value).",
      });
    }

    // The engineer's visit covers the spinning-disk system only, this week.
    const [visit] = await tx
      .select()
      .from(serviceVisits)
      .where(eq(serviceVisits.facilityId, facilityId))
      .limit(1);
    if (!visit) {
      const start = new Date();
      start.setUTCHours(0, 0, 0, 0);
      const [row] = await tx
        .insert(serviceVisits)
        .values({
          facilityId,
          engineerId: userIds.engineer!,
          title: "Preventive maintenance, spinning disk",
          startsAt: new Date(start.getTime() - 86_400_000),
          endsAt: new Date(start.getTime() + 7 * 86_400_000),
        })
        .returning();
      await tx
        .insert(serviceVisitInstruments)
        .values({ visitId: row!.id, instrumentId: instrumentIds.spinning! });
    }
    return { facilityId, userIds: userIds as Record<Role, string>, instrumentIds };
  });
}
