/**
 * Integration-test fixtures: facilities, people and instruments created directly in
 * the test database (a fresh database per `npm test` run, dropped afterwards).
 */
import { randomUUID } from "node:crypto";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { getDb } from "@/server/db/client";
import { AppError } from "@/server/http/errors";
import { getStorage } from "@/server/storage/get-storage";
import { registerStackFromFile } from "@/server/services/stacks";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";
import {
  facilities,
  instruments,
  measurements,
  memberships,
  objectives,
  serviceVisitInstruments,
  serviceVisits,
  users,
} from "@/server/db/schema";
import type { Actor, Role } from "@/server/auth/permissions";
import { hashPassword } from "@/server/services/sign-in";

export interface TestFacility {
  facilityId: string;
  actors: Record<Role, Actor>;
  instrumentIds: [string, string];
  objectiveIds: [string, string];
  passwords: Record<Role, string>;
}

/** A facility with one member per role, two instruments with one objective each, and an engineer visit on the first. */
export async function makeFacility(label: string): Promise<TestFacility> {
  const db = getDb();
  const tag = `${label}-${randomUUID().slice(0, 8)}`;
  const [facility] = await db
    .insert(facilities)
    .values({ name: `Test facility ${tag}`, slug: tag })
    .returning();
  const facilityId = facility!.id;
  const actors = {} as Record<Role, Actor>;
  const passwords = {} as Record<Role, string>;
  for (const role of ["admin", "staff", "researcher", "engineer"] as const) {
    passwords[role] = `pw-${role}-${tag}`;
    const [u] = await db
      .insert(users)
      .values({
        email: `${role}-${tag}@test.example`,
        name: `${role} ${tag}`,
        passwordHash: await hashPassword(passwords[role]),
      })
      .returning();
    await db.insert(memberships).values({ facilityId, userId: u!.id, role });
    actors[role] = { userId: u!.id, facilityId, role, via: "session" };
  }
  const [i1] = await db
    .insert(instruments)
    .values({ facilityId, name: `Scope A ${tag}`, modality: "confocal" })
    .returning();
  const [i2] = await db
    .insert(instruments)
    .values({ facilityId, name: `Scope B ${tag}`, modality: "widefield" })
    .returning();
  const [o1] = await db
    .insert(objectives)
    .values({
      facilityId,
      instrumentId: i1!.id,
      name: "63× / 1.40 oil",
      magnification: 63,
      na: 1.4,
      immersion: "oil",
      designImmersionRi: 1.518,
    })
    .returning();
  const [o2] = await db
    .insert(objectives)
    .values({
      facilityId,
      instrumentId: i2!.id,
      name: "60× / 1.20 water",
      magnification: 60,
      na: 1.2,
      immersion: "water",
      designImmersionRi: 1.333,
    })
    .returning();
  const now = Date.now();
  const [visit] = await db
    .insert(serviceVisits)
    .values({
      facilityId,
      engineerId: actors.engineer.userId,
      title: "visit",
      startsAt: new Date(now - 86_400_000),
      endsAt: new Date(now + 86_400_000),
    })
    .returning();
  await db.insert(serviceVisitInstruments).values({ visitId: visit!.id, instrumentId: i1!.id });
  return { facilityId, actors, instrumentIds: [i1!.id, i2!.id], objectiveIds: [o1!.id, o2!.id], passwords };
}

const DAY_MS = 86_400_000;

/** Register a tiny invented bead stack (2 beads, 40×64×64) as `actor`; returns its id. */
export async function registerTinyStack(actor: Actor): Promise<string> {
  const dir = mkdtempSync(path.join(tmpdir(), "bb-tiny-"));
  try {
    const file = path.join(dir, "s.tif");
    const demo = makeDemoBeadStack({
      na: 1.4,
      immersionRi: 1.518,
      sampleRi: 1.518,
      emissionWavelengthNm: 520,
      beadCount: 2,
      shape: [40, 64, 64],
    });
    writeFileSync(file, demo.tiff);
    return (await registerStackFromFile(getDb(), getStorage(), actor, { filePath: file, fileName: "s.tif" }))
      .id;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/**
 * A finished check with the given measured/theory ratios, inserted directly: for
 * logic that reads only the stored summary (trends, visits, reports). Invented data.
 */
export async function insertFinishedCheck(input: {
  facilityId: string;
  stackId: string;
  objectiveId: string;
  daysAgo: number;
  purpose: "routine" | "baseline" | "pre-service" | "post-service";
  lateral: number;
  axial: number;
}): Promise<void> {
  await getDb()
    .insert(measurements)
    .values({
      facilityId: input.facilityId,
      stackId: input.stackId,
      objectiveId: input.objectiveId,
      purpose: input.purpose,
      status: "done",
      modality: "widefield",
      parameters: {},
      summary: {
        ratios: { lateral: input.lateral, axial: input.axial },
        theory: { formulaId: "widefield-airy-nonparaxial-axial", formulaVersion: "1.0.0" },
      },
      acquiredAt: new Date(Date.now() - input.daysAgo * DAY_MS),
    });
}

/** "ok", or the AppError code a service call refused with (anything else is re-thrown). */
export async function outcome(fn: () => Promise<unknown>): Promise<string> {
  try {
    await fn();
    return "ok";
  } catch (err) {
    if (err instanceof AppError) return err.code;
    throw err;
  }
}
