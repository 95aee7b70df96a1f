import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb, getDb } from "@/server/db/client";
import {
  createServiceVisit,
  getServiceVisitReport,
  signOffServiceVisit,
} from "@/server/services/service-visits";
import { insertFinishedCheck, makeFacility, registerTinyStack, type TestFacility } from "./helpers";

let f: TestFacility;
let stackId: string;
const DAY = 86_400_000;

function check(
  objectiveId: string,
  daysAgo: number,
  purpose: "routine" | "baseline" | "pre-service" | "post-service",
  lateral: number,
  axial: number,
) {
  return insertFinishedCheck({
    facilityId: f.facilityId,
    stackId,
    objectiveId,
    daysAgo,
    purpose,
    lateral,
    axial,
  });
}

beforeAll(async () => {
  f = await makeFacility("visit");
  stackId = await registerTinyStack(f.actors.staff);
  const o = f.objectiveIds[0];
  await check(o, 200, "baseline", 1.1, 1.12);
  for (const [d, l, a] of [
    [170, 1.11, 1.13],
    [140, 1.09, 1.11],
    [110, 1.1, 1.14],
    [80, 1.12, 1.12],
  ] as const)
    await check(o, d, "routine", l, a);
  await check(o, 2, "pre-service", 1.55, 1.7);
  await check(o, 1, "post-service", 1.11, 1.13);
  const o2 = f.objectiveIds[1];
  for (const [d, l, a] of [
    [200, 1.1, 1.1],
    [170, 1.1, 1.12],
    [140, 1.11, 1.11],
  ] as const)
    await check(o2, d, "routine", l, a);
  await check(o2, 1, "post-service", 1.3, 1.45);
});
afterAll(async () => {
  await closeDb();
});

describe("service visit report", () => {
  it("compares as-found and as-left with the pre-visit baseline", async () => {
    const visit = await createServiceVisit(getDb(), f.actors.admin, {
      title: "Annual maintenance",
      engineerId: f.actors.engineer.userId,
      instrumentIds: f.instrumentIds,
      startsAt: new Date(Date.now() - 3 * DAY).toISOString(),
      endsAt: new Date(Date.now() + DAY).toISOString(),
    });
    const report = await getServiceVisitReport(getDb(), f.actors.engineer, visit.id);
    const a = report.comparisons.find((c) => c.objectiveId === f.objectiveIds[0])!;
    expect(a.asFound?.axial).toBeCloseTo(1.7, 6);
    expect(a.asLeft?.axial).toBeCloseTo(1.13, 6);
    expect(a.baseline.checks).toBe(5);
    expect(a.baseline.axial).toBeCloseTo((1.12 + 1.13 + 1.11 + 1.14 + 1.12) / 5, 6);
    expect(a.verdict).toBe("restored");
    // Within the 1.5 limit, but far above a tight baseline: not restored (3σ rule, QC-PRACTICE.md §3).
    const b = report.comparisons.find((c) => c.objectiveId === f.objectiveIds[1])!;
    expect(b.verdict).toBe("not restored");
    expect(b.reason).toMatch(/3σ above the baseline/);
  });

  it("says a lens nobody checked during a finished visit was not part of it, and waits during one", async () => {
    // The checks above fall at 200, 170, 140, 110, 80, 2 and 1 days ago: none in these windows
    // but one routine check at 110 days, which is not visit work.
    const past = await createServiceVisit(getDb(), f.actors.admin, {
      title: "Stage service",
      instrumentIds: f.instrumentIds,
      startsAt: new Date(Date.now() - 112 * DAY).toISOString(),
      endsAt: new Date(Date.now() - 95 * DAY).toISOString(),
    });
    const done = await getServiceVisitReport(getDb(), f.actors.admin, past.id);
    expect(done.comparisons.map((c) => c.verdict)).toEqual([
      "not checked in this visit",
      "not checked in this visit",
    ]);
    const ongoing = await createServiceVisit(getDb(), f.actors.admin, {
      title: "Alignment",
      instrumentIds: f.instrumentIds,
      startsAt: new Date(Date.now() - 3_600_000).toISOString(),
      endsAt: new Date(Date.now() + DAY).toISOString(),
    });
    const open = await getServiceVisitReport(getDb(), f.actors.admin, ongoing.id);
    expect(open.comparisons.map((c) => c.verdict)).toEqual([
      "awaiting as-left check",
      "awaiting as-left check",
    ]);
  });

  it("is invisible to researchers and to other engineers, and signs off once", async () => {
    const visit = await createServiceVisit(getDb(), f.actors.staff, {
      title: "Repair",
      instrumentIds: [f.instrumentIds[0]],
      startsAt: new Date().toISOString().slice(0, 10),
      endsAt: new Date().toISOString().slice(0, 10),
    });
    await expect(getServiceVisitReport(getDb(), f.actors.researcher, visit.id)).rejects.toMatchObject({
      code: "not_found",
    });
    await expect(getServiceVisitReport(getDb(), f.actors.engineer, visit.id)).rejects.toMatchObject({
      code: "not_found",
    });
    await signOffServiceVisit(
      getDb(),
      f.actors.staff,
      visit.id,
      "Replaced the front element; as-left check attached.",
    );
    await expect(signOffServiceVisit(getDb(), f.actors.staff, visit.id, "again")).rejects.toMatchObject({
      code: "conflict",
    });
  });

  it("refuses instruments of another facility", async () => {
    const other = await makeFacility("visit-other");
    await expect(
      createServiceVisit(getDb(), f.actors.admin, {
        title: "x",
        instrumentIds: [other.instrumentIds[0]],
        startsAt: "2026-12-01",
        endsAt: "2026-12-02",
      }),
    ).rejects.toMatchObject({ code: "unprocessable" });
  });
});
