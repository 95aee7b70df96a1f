/**
 * Demo history: about a year of invented monthly checks for four demo objectives,
 * each a real synthetic bead stack (Gibson–Lanni rendered, broadened by a
 * per-check "degradation") queued for the worker, which runs the real analysis. The
 * story: the 63× oil lens drifts as its immersion oil ages ("watch"), the 40× air
 * lens is overdue, the 100× oil lens fails and is restored by a signed-off service
 * visit, the 60× water lens stays steady; the other two lenses have no data.
 * Runs once: skipped when the demo facility has checks.
 * tests/integration/demo-history.test.ts checks this story through the services.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { and, eq } from "drizzle-orm";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";
import { makeRng } from "../../fixtures/synthetic-stack";
import type { Db } from "../server/db/client";
import {
  facilities,
  logbookEvents,
  measurements,
  memberships,
  objectives,
  serviceVisitInstruments,
  serviceVisits,
  users,
  type Objective,
} from "../server/db/schema";
import type { Actor } from "../server/auth/permissions";
import { addLogbookEvent } from "../server/services/logbook";
import { createMeasurement } from "../server/services/measurements";
import { registerStackFromFile } from "../server/services/stacks";
import type { ObjectStorage } from "../server/storage/storage";
import { DEMO_FACILITY } from "../server/services/demo-data";

interface Plan {
  serial: string;
  emissionWavelengthNm: number;
  excitationWavelengthNm?: number;
  modality: "widefield" | "confocal";
  /** Broadening per check, oldest first; null = no check that month. */
  degradation: Array<number | null>;
  purposes?: Record<number, "baseline" | "pre-service" | "post-service">;
  events?: Array<{
    monthIndex: number;
    kind: "baseline_start" | "cleaned" | "service" | "immersion_changed";
    note: string;
    /** Hours from that month's check (negative = before it). */
    offsetHours: number;
  }>;
  /** Days before today of the newest check. */
  lastCheckDaysAgo: number;
  /** A past service visit spanning these months' checks (as found → as left). */
  visit?: { from: number; to: number; title: string };
}

const PLANS: Plan[] = [
  {
    serial: "OBJ-O63-0908",
    emissionWavelengthNm: 520,
    excitationWavelengthNm: 488,
    modality: "confocal",
    // Steady for the baseline block, then drifting after month 9 as the oil ages.
    degradation: [1.1, 1.08, 1.11, 1.08, 1.1, 1.09, 1.11, 1.1, 1.09, 1.12, 1.16, 1.2, 1.24],
    purposes: { 0: "baseline" },
    events: [
      {
        monthIndex: 0,
        kind: "baseline_start",
        note: "Baseline after installation on Confocal North (demo).",
        offsetHours: -1,
      },
      {
        monthIndex: 9,
        kind: "immersion_changed",
        note: "Opened a new bottle of immersion oil (demo).",
        offsetHours: -1,
      },
    ],
    lastCheckDaysAgo: 6,
  },
  {
    serial: "OBJ-W60-1187",
    emissionWavelengthNm: 520,
    excitationWavelengthNm: 488,
    modality: "confocal",
    degradation: [1.12, 1.13, 1.11, 1.14, 1.12, 1.13, 1.11, 1.12, null, 1.13, 1.12, 1.14, 1.12],
    purposes: { 0: "baseline" },
    lastCheckDaysAgo: 12,
  },
  {
    serial: "OBJ-A40-3301",
    emissionWavelengthNm: 520,
    modality: "widefield",
    degradation: [1.1, 1.12, 1.11, 1.1, 1.13, 1.11, 1.12, 1.1, 1.11, 1.12, 1.1, 1.12],
    purposes: { 0: "baseline" },
    lastCheckDaysAgo: 45,
  },
  {
    serial: "OBJ-O100-5521",
    emissionWavelengthNm: 520,
    modality: "widefield",
    degradation: [1.1, 1.11, 1.1, 1.12, 1.11, 1.12, 1.14, 1.17, 1.62, 1.1, 1.11, 1.12, 1.1],
    purposes: { 0: "baseline", 8: "pre-service", 9: "post-service" },
    events: [
      // After the failed as-found check (the note says so), before the as-left check.
      {
        monthIndex: 8,
        kind: "cleaned",
        note: "Cleaned after the failed check; no improvement (demo).",
        offsetHours: 1,
      },
      {
        monthIndex: 9,
        kind: "service",
        note: "Front element replaced under the service contract (demo).",
        offsetHours: -1,
      },
    ],
    visit: { from: 8, to: 9, title: "Repair of the 100× oil objective (demo)" },
    lastCheckDaysAgo: 3,
  },
];

const OBJECTIVE_OPTICS: Record<string, { na: number; immersionRi: number }> = {
  "OBJ-O63-0908": { na: 1.4, immersionRi: 1.518 },
  "OBJ-W60-1187": { na: 1.2, immersionRi: 1.333 },
  "OBJ-A40-3301": { na: 0.95, immersionRi: 1.0 },
  "OBJ-O100-5521": { na: 1.45, immersionRi: 1.518 },
};

const DAY_MS = 86_400_000;
const HOUR_MS = 3_600_000;

export interface SeedHistoryOptions {
  /** The clock every invented date is counted back from. @default the current time */
  now?: Date;
}

/**
 * Seed the history once; returns how many checks were queued (0 when skipped).
 *
 * Two phases, so an interrupted first run (the stacks take most of the time) leaves
 * no checks behind and the next run seeds the whole story: first every stack is
 * rendered and stored (deterministic bytes, so a re-run reuses the stored stacks),
 * then the visit, the events and the checks are written in one short pass. Visits
 * and events are only added when not already there.
 */
export async function seedDemoHistory(
  db: Db,
  storage: ObjectStorage,
  options: SeedHistoryOptions = {},
): Promise<number> {
  const now = (options.now ?? new Date()).getTime();
  const [facility] = await db.select().from(facilities).where(eq(facilities.slug, DEMO_FACILITY.slug));
  if (!facility) return 0;
  const hasChecks = async () =>
    (
      await db
        .select({ id: measurements.id })
        .from(measurements)
        .where(eq(measurements.facilityId, facility.id))
        .limit(1)
    ).length > 0;
  if (await hasChecks()) return 0;
  const memberOf = async (role: "staff" | "engineer") =>
    (
      await db
        .select({ id: users.id })
        .from(users)
        .innerJoin(memberships, eq(memberships.userId, users.id))
        .where(and(eq(memberships.facilityId, facility.id), eq(memberships.role, role)))
        .limit(1)
    )[0];
  const staffRow = await memberOf("staff");
  if (!staffRow) return 0;
  const staff: Actor = { userId: staffRow.id, facilityId: facility.id, role: "staff", via: "worker" };

  interface Planned {
    plan: Plan;
    objective: Objective;
    dateOf: (i: number) => Date;
    checks: Array<{ index: number; stackId: string }>;
  }
  const planned: Planned[] = [];
  const dir = mkdtempSync(path.join(tmpdir(), "bb-demo-"));
  const rng = makeRng(2026);
  let rendered = 0;
  try {
    // Phase 1: render and store every stack (no checks yet).
    for (const plan of PLANS) {
      const [objective] = await db
        .select()
        .from(objectives)
        .where(and(eq(objectives.facilityId, facility.id), eq(objectives.serialNumber, plan.serial)));
      if (!objective) continue;
      const optics = OBJECTIVE_OPTICS[plan.serial]!;
      const n = plan.degradation.length;
      const dateOf = (i: number) => new Date(now - (plan.lastCheckDaysAgo + (n - 1 - i) * 30) * DAY_MS);
      const entry: Planned = { plan, objective, dateOf, checks: [] };
      for (let i = 0; i < n; i++) {
        const d = plan.degradation[i];
        if (d == null) continue;
        const demo = makeDemoBeadStack({
          ...optics,
          sampleRi: optics.immersionRi,
          emissionWavelengthNm: plan.emissionWavelengthNm,
          degradation: d * (1 + 0.01 * (rng() - 0.5)),
          beadCount: 10,
          seed: 1000 + rendered,
        });
        rendered++;
        const file = path.join(dir, `check-${rendered}.tif`);
        writeFileSync(file, demo.tiff);
        const stack = await registerStackFromFile(db, storage, staff, {
          filePath: file,
          fileName: `${plan.serial}-${dateOf(i).toISOString().slice(0, 10)}.tif`,
        });
        rmSync(file, { force: true });
        entry.checks.push({ index: i, stackId: stack.id });
      }
      planned.push(entry);
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }

  // Phase 2: the visit, the logbook events and the checks, in one short pass.
  if (await hasChecks()) return 0; // another run got here first
  const engineer = await memberOf("engineer");
  let created = 0;
  for (const { plan, objective, dateOf, checks } of planned) {
    if (plan.visit && objective.instrumentId) {
      const [existing] = await db
        .select({ id: serviceVisits.id })
        .from(serviceVisits)
        .where(and(eq(serviceVisits.facilityId, facility.id), eq(serviceVisits.title, plan.visit.title)))
        .limit(1);
      if (!existing) {
        await db.transaction(async (tx) => {
          const [visit] = await tx
            .insert(serviceVisits)
            .values({
              facilityId: facility.id,
              engineerId: engineer?.id ?? null,
              title: plan.visit!.title,
              startsAt: new Date(dateOf(plan.visit!.from).getTime() - 2 * HOUR_MS),
              endsAt: new Date(dateOf(plan.visit!.to).getTime() + 2 * HOUR_MS),
              report:
                "As found: lateral and axial FWHM above the limits; cleaning the front lens did not help. Front element replaced; as left within limits (invented demo report).",
              signedOffAt: new Date(dateOf(plan.visit!.to).getTime() + 3 * HOUR_MS),
            })
            .returning();
          await tx
            .insert(serviceVisitInstruments)
            .values({ visitId: visit!.id, instrumentId: objective.instrumentId! });
        });
      }
    }
    for (const ev of plan.events ?? []) {
      const [existing] = await db
        .select({ id: logbookEvents.id })
        .from(logbookEvents)
        .where(
          and(
            eq(logbookEvents.objectiveId, objective.id),
            eq(logbookEvents.kind, ev.kind),
            eq(logbookEvents.note, ev.note),
          ),
        )
        .limit(1);
      if (existing) continue;
      await addLogbookEvent(db, staff, objective.id, {
        kind: ev.kind,
        note: ev.note,
        occurredAt: new Date(dateOf(ev.monthIndex).getTime() + ev.offsetHours * HOUR_MS).toISOString(),
      });
    }
    for (const { index, stackId } of checks) {
      await createMeasurement(db, staff, {
        stackId,
        objectiveId: objective.id,
        purpose: plan.purposes?.[index] ?? "routine",
        channel: 0,
        emissionWavelengthNm: plan.emissionWavelengthNm,
        excitationWavelengthNm: plan.excitationWavelengthNm,
        modality: plan.modality,
        pinholeAu: plan.modality === "confocal" ? 1 : undefined,
        beadDiameterNm: 100,
        acquiredAt: dateOf(index).toISOString(),
      });
      created++;
    }
  }
  return created;
}
