/**
 * Demo history: about a year of invented monthly checks for four demo objectives,
 * each a real synthetic bead stack (Gibson–Lanni rendered, broadened by a
 * per-check "degradation") run through the real analysis by the worker. The
 * story: the 63× oil lens drifts as its immersion oil ages, the 40× air lens is
 * overdue, the 100× oil lens fails and is restored by a service visit, the 60×
 * water lens stays steady. Runs once: skipped when the demo facility has checks.
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
  measurements,
  memberships,
  objectives,
  serviceVisitInstruments,
  serviceVisits,
  users,
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
    degradation: [1.08, 1.1, 1.09, 1.11, 1.1, 1.09, 1.12, 1.16, 1.2, 1.24],
    purposes: { 0: "baseline" },
    events: [
      {
        monthIndex: 0,
        kind: "baseline_start",
        note: "Baseline after installation on Confocal North (demo).",
      },
      { monthIndex: 6, kind: "immersion_changed", note: "Opened a new bottle of immersion oil (demo)." },
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
      { monthIndex: 8, kind: "cleaned", note: "Cleaned after the failed check; no improvement (demo)." },
      { monthIndex: 9, kind: "service", note: "Front element replaced under the service contract (demo)." },
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

export async function seedDemoHistory(db: Db, storage: ObjectStorage): Promise<number> {
  const [facility] = await db.select().from(facilities).where(eq(facilities.slug, DEMO_FACILITY.slug));
  if (!facility) return 0;
  const [any] = await db
    .select({ id: measurements.id })
    .from(measurements)
    .where(eq(measurements.facilityId, facility.id))
    .limit(1);
  if (any) return 0;
  const [staffRow] = await db
    .select({ id: users.id })
    .from(users)
    .innerJoin(memberships, eq(memberships.userId, users.id))
    .where(and(eq(memberships.facilityId, facility.id), eq(memberships.role, "staff")));
  if (!staffRow) return 0;
  const staff: Actor = { userId: staffRow.id, facilityId: facility.id, role: "staff", via: "worker" };
  const dir = mkdtempSync(path.join(tmpdir(), "bb-demo-"));
  const rng = makeRng(2026);
  let created = 0;
  try {
    for (const plan of PLANS) {
      const [obj] = await db
        .select()
        .from(objectives)
        .where(and(eq(objectives.facilityId, facility.id), eq(objectives.serialNumber, plan.serial)));
      if (!obj) continue;
      const optics = OBJECTIVE_OPTICS[plan.serial]!;
      const n = plan.degradation.length;
      const dateOf = (i: number) =>
        new Date(Date.now() - (plan.lastCheckDaysAgo + (n - 1 - i) * 30) * 86_400_000);
      if (plan.visit && obj.instrumentId) {
        const [engineer] = await db
          .select({ id: users.id })
          .from(users)
          .innerJoin(memberships, eq(memberships.userId, users.id))
          .where(and(eq(memberships.facilityId, facility.id), eq(memberships.role, "engineer")));
        const [visit] = await db
          .insert(serviceVisits)
          .values({
            facilityId: facility.id,
            engineerId: engineer?.id ?? null,
            title: plan.visit.title,
            startsAt: new Date(dateOf(plan.visit.from).getTime() - 2 * 3600_000),
            endsAt: new Date(dateOf(plan.visit.to).getTime() + 2 * 3600_000),
            report:
              "As found: axial FWHM well above the limit after cleaning. Front element replaced; as left within limits (invented demo report).",
            signedOffAt: new Date(dateOf(plan.visit.to).getTime() + 3 * 3600_000),
          })
          .returning();
        await db
          .insert(serviceVisitInstruments)
          .values({ visitId: visit!.id, instrumentId: obj.instrumentId });
      }
      for (const ev of plan.events ?? []) {
        await addLogbookEvent(db, { ...staff, role: "admin" }, obj.id, {
          kind: ev.kind,
          note: ev.note,
          occurredAt: new Date(dateOf(ev.monthIndex).getTime() - 3600_000).toISOString(),
        });
      }
      for (let i = 0; i < n; i++) {
        const d = plan.degradation[i];
        if (d == null) continue;
        const demo = makeDemoBeadStack({
          ...optics,
          sampleRi: optics.immersionRi,
          emissionWavelengthNm: plan.emissionWavelengthNm,
          degradation: d * (1 + 0.01 * (rng() - 0.5)),
          beadCount: 10,
          seed: 1000 + created,
        });
        const file = path.join(dir, `check-${created}.tif`);
        writeFileSync(file, demo.tiff);
        const stack = await registerStackFromFile(db, storage, staff, {
          filePath: file,
          fileName: `${plan.serial}-${dateOf(i).toISOString().slice(0, 10)}.tif`,
        });
        await createMeasurement(db, staff, {
          stackId: stack.id,
          objectiveId: obj.id,
          purpose: plan.purposes?.[i] ?? "routine",
          channel: 0,
          emissionWavelengthNm: plan.emissionWavelengthNm,
          excitationWavelengthNm: plan.excitationWavelengthNm,
          modality: plan.modality,
          pinholeAu: plan.modality === "confocal" ? 1 : undefined,
          beadDiameterNm: 100,
          acquiredAt: dateOf(i).toISOString(),
        });
        created++;
      }
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return created;
}
