/**
 * `GET /api/v1/measurements` at the service: the list shows exactly the rows `getMeasurementRow`
 * lets each caller open (same facility; a researcher's view hides other people's sample
 * measurements; an engineer's shows only the current visit's instruments), its filters, and
 * keyset pages joined by `next` that cover every row once, newest first. Invented data.
 */
import { randomUUID } from "node:crypto";
import { and, desc, eq, inArray } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { measurementListQuerySchema, type MeasurementListQuery } from "@/contracts/measurements";
import type { Actor } from "@/server/auth/permissions";
import { closeDb, getDb } from "@/server/db/client";
import {
  measurements,
  memberships,
  objectives,
  serviceVisitInstruments,
  serviceVisits,
  users,
} from "@/server/db/schema";
import { getMeasurementRow, listMeasurements } from "@/server/services/measurements";
import { makeFacility, outcome, registerTinyStack, type TestFacility } from "./helpers";

const DAY = 86_400_000;
type Purpose = "routine" | "baseline" | "pre-service" | "post-service" | "sample";
type Status = "queued" | "running" | "done" | "failed" | "cancelled";

let f: TestFacility; // the facility under test
let g: TestFacility; // another facility: none of its rows may show, none of f's may show to it
let p: TestFacility; // a facility holding only the rows the paging tests walk
let unmountedObjective: string; // an objective of f on no instrument
let researcher2: Actor; // a second researcher of f
let idleEngineer: Actor; // an engineer of f whose only visit is over
const named: Record<string, string> = {};

interface Row {
  name: string;
  objectiveId: string;
  purpose: Purpose;
  status: Status;
  createdBy: string | null;
  daysAgo: number;
  version?: number;
}

/** Insert rows directly (a done one with an invented summary); their ids land in `named`. */
async function insertRows(facility: TestFacility, stackId: string, rows: Row[]) {
  const inserted = await getDb()
    .insert(measurements)
    .values(
      rows.map((r, i) => ({
        facilityId: facility.facilityId,
        stackId,
        objectiveId: r.objectiveId,
        createdBy: r.createdBy,
        purpose: r.purpose,
        status: r.status,
        modality: "confocal" as const,
        parameters: {},
        version: r.version ?? 1,
        summary:
          r.status === "done"
            ? {
                ratios: { lateral: 1.1 + i / 100, axial: 1.3 + i / 100 },
                verdict: { level: i % 2 ? "fail" : "pass", headline: "invented", evidence: [] },
                averagedPsf: { dataBase64: "A".repeat(20_000) },
              }
            : null,
        finishedAt: r.status === "done" || r.status === "failed" ? new Date() : null,
        acquiredAt: new Date(Date.now() - r.daysAgo * DAY),
      })),
    )
    .returning({ id: measurements.id });
  rows.forEach((r, i) => (named[r.name] = inserted[i]!.id));
}

/** Every row a caller's list holds, walking `next` (pages of `limit`). */
async function listAll(actor: Actor, query: Partial<MeasurementListQuery> = {}, limit = 200) {
  const rows: Awaited<ReturnType<typeof listMeasurements>>["measurements"] = [];
  let before = query.before;
  for (let page = 0; page < 1000; page++) {
    const r = await listMeasurements(getDb(), actor, { limit, ...query, before });
    expect(r.measurements.length).toBeLessThanOrEqual(limit);
    rows.push(...r.measurements);
    if (r.next === null) return rows;
    expect(r.measurements).toHaveLength(limit);
    before = r.next;
  }
  throw new Error("the list did not end");
}

async function userOf(facility: TestFacility, role: "researcher" | "engineer"): Promise<Actor> {
  const tag = randomUUID().slice(0, 8);
  const [u] = await getDb()
    .insert(users)
    .values({ email: `${role}2-${tag}@test.example`, name: `second ${role} ${tag}` })
    .returning();
  await getDb().insert(memberships).values({ facilityId: facility.facilityId, userId: u!.id, role });
  return { userId: u!.id, facilityId: facility.facilityId, role, via: "token" };
}

beforeAll(async () => {
  f = await makeFacility("mlist");
  g = await makeFacility("mlist-other");
  p = await makeFacility("mlist-pages");
  researcher2 = await userOf(f, "researcher");
  idleEngineer = await userOf(f, "engineer");
  // The idle engineer's visit covers the first instrument but ended yesterday.
  const [past] = await getDb()
    .insert(serviceVisits)
    .values({
      facilityId: f.facilityId,
      engineerId: idleEngineer.userId,
      title: "past visit",
      startsAt: new Date(Date.now() - 3 * DAY),
      endsAt: new Date(Date.now() - DAY),
    })
    .returning();
  await getDb()
    .insert(serviceVisitInstruments)
    .values({ visitId: past!.id, instrumentId: f.instrumentIds[0] });
  const [o] = await getDb()
    .insert(objectives)
    .values({
      facilityId: f.facilityId,
      name: "10× / 0.30 air (unmounted)",
      magnification: 10,
      na: 0.3,
      immersion: "air",
      designImmersionRi: 1,
    })
    .returning();
  unmountedObjective = o!.id;

  const stackF = await registerTinyStack(f.actors.staff);
  const stackG = await registerTinyStack(g.actors.staff);
  const [visitLens, otherLens] = f.objectiveIds; // the engineer's visit covers the first one's instrument
  const a = f.actors;
  await insertRows(f, stackF, [
    { name: "routine on visit", objectiveId: visitLens, purpose: "routine", status: "done", createdBy: a.staff.userId, daysAgo: 1 },
    { name: "rerun on visit", objectiveId: visitLens, purpose: "routine", status: "done", createdBy: a.staff.userId, daysAgo: 1, version: 2 },
    { name: "pre-service on visit", objectiveId: visitLens, purpose: "pre-service", status: "queued", createdBy: a.staff.userId, daysAgo: 0.5 },
    { name: "engineer's post-service", objectiveId: visitLens, purpose: "post-service", status: "running", createdBy: a.engineer.userId, daysAgo: 0.2 },
    { name: "researcher's sample on visit", objectiveId: visitLens, purpose: "sample", status: "done", createdBy: a.researcher.userId, daysAgo: 2 },
    { name: "staff's sample on visit", objectiveId: visitLens, purpose: "sample", status: "done", createdBy: a.staff.userId, daysAgo: 3 },
    { name: "failed routine off visit", objectiveId: otherLens, purpose: "routine", status: "failed", createdBy: a.admin.userId, daysAgo: 4 },
    { name: "baseline off visit", objectiveId: otherLens, purpose: "baseline", status: "done", createdBy: a.admin.userId, daysAgo: 30 },
    { name: "researcher's sample off visit", objectiveId: otherLens, purpose: "sample", status: "cancelled", createdBy: a.researcher.userId, daysAgo: 5 },
    { name: "second researcher's sample", objectiveId: otherLens, purpose: "sample", status: "done", createdBy: researcher2.userId, daysAgo: 6 },
    { name: "sample of a deleted user", objectiveId: otherLens, purpose: "sample", status: "done", createdBy: null, daysAgo: 7 },
    { name: "routine by a deleted user", objectiveId: otherLens, purpose: "routine", status: "done", createdBy: null, daysAgo: 8 },
    { name: "routine unmounted", objectiveId: unmountedObjective, purpose: "routine", status: "done", createdBy: a.staff.userId, daysAgo: 9 },
  ]); // prettier-ignore
  await insertRows(g, stackG, [
    { name: "other: routine", objectiveId: g.objectiveIds[0], purpose: "routine", status: "done", createdBy: g.actors.staff.userId, daysAgo: 1 },
    { name: "other: researcher's sample", objectiveId: g.objectiveIds[0], purpose: "sample", status: "done", createdBy: g.actors.researcher.userId, daysAgo: 2 },
  ]); // prettier-ignore
});

afterAll(async () => {
  await closeDb();
});

describe("who sees which measurements", () => {
  const callers = () => ({
    "f admin": f.actors.admin,
    "f staff": f.actors.staff,
    "f researcher": f.actors.researcher,
    "f second researcher": researcher2,
    "f engineer": f.actors.engineer,
    "f engineer without a current visit": idleEngineer,
    "g admin": g.actors.admin,
    "g researcher": g.actors.researcher,
    "g engineer": g.actors.engineer,
  });
  const everyId = () => Object.values(named);

  it("each caller's list is exactly the rows getMeasurementRow opens for them", async () => {
    for (const [label, actor] of Object.entries(callers())) {
      const expected: string[] = [];
      for (const id of everyId()) {
        if ((await outcome(() => getMeasurementRow(getDb(), actor, id))) === "ok") expected.push(id);
      }
      const listed = (await listAll(actor)).map((m) => m.id);
      expect(listed.toSorted(), label).toEqual(expected.toSorted());
    }
  });

  it("admin and staff see all 13 of their facility's rows and none of the other's", async () => {
    for (const actor of [f.actors.admin, f.actors.staff]) {
      const ids = (await listAll(actor)).map((m) => m.id);
      expect(ids).toHaveLength(13);
      expect(ids).not.toContain(named["other: routine"]);
      expect(ids).not.toContain(named["other: researcher's sample"]);
    }
    const theirs = (await listAll(g.actors.admin)).map((m) => m.id);
    expect(theirs.toSorted()).toEqual(
      [named["other: routine"], named["other: researcher's sample"]].toSorted(),
    );
  });

  it("a researcher sees every non-sample measurement and only their own sample ones", async () => {
    const names = new Map(Object.entries(named).map(([k, v]) => [v, k]));
    const mine = (await listAll(f.actors.researcher)).map((m) => names.get(m.id)).sort();
    expect(mine).toEqual(
      [
        "routine on visit",
        "rerun on visit",
        "pre-service on visit",
        "engineer's post-service",
        "researcher's sample on visit",
        "failed routine off visit",
        "baseline off visit",
        "researcher's sample off visit",
        "routine by a deleted user",
        "routine unmounted",
      ].sort(),
    );
    const second = (await listAll(researcher2)).map((m) => names.get(m.id));
    expect(second).toContain("second researcher's sample");
    expect(second).not.toContain("researcher's sample on visit");
    expect(second).not.toContain("sample of a deleted user");
  });

  it("an engineer sees only the current visit's instruments; without a current visit, nothing", async () => {
    const names = new Map(Object.entries(named).map(([k, v]) => [v, k]));
    const seen = (await listAll(f.actors.engineer)).map((m) => names.get(m.id)).sort();
    expect(seen).toEqual(
      [
        "routine on visit",
        "rerun on visit",
        "pre-service on visit",
        "engineer's post-service",
        "researcher's sample on visit",
        "staff's sample on visit",
      ].sort(),
    );
    expect(await listAll(idleEngineer)).toEqual([]);
    // Unmounting the lens takes its measurements out of the engineer's view, as getMeasurementRow does.
    await getDb().update(objectives).set({ instrumentId: null }).where(eq(objectives.id, f.objectiveIds[0]));
    try {
      expect(await listAll(f.actors.engineer)).toEqual([]);
    } finally {
      await getDb()
        .update(objectives)
        .set({ instrumentId: f.instrumentIds[0] })
        .where(eq(objectives.id, f.objectiveIds[0]));
    }
  });

  it("another facility's objective id matches nothing, the same as an unknown id", async () => {
    const foreign = await listMeasurements(getDb(), f.actors.admin, {
      limit: 50,
      objectiveId: g.objectiveIds[0],
    });
    const unknown = await listMeasurements(getDb(), f.actors.admin, { limit: 50, objectiveId: randomUUID() });
    expect(foreign).toEqual({ measurements: [], next: null });
    expect(unknown).toEqual(foreign);
    // An engineer naming a lens of their own facility outside the visit gets the same empty answer.
    const offVisit = await listMeasurements(getDb(), f.actors.engineer, {
      limit: 50,
      objectiveId: f.objectiveIds[1],
    });
    expect(offVisit).toEqual(foreign);
  });
});

describe("rows and filters", () => {
  it("a finished row carries the ratios and verdict level; an unfinished one has none", async () => {
    const rows = await listAll(f.actors.admin);
    const done = rows.find((m) => m.id === named["routine on visit"])!;
    // Row 0 of the inserted batch: invented ratios 1.10 / 1.30, verdict "pass" (see insertRows).
    expect(done).toMatchObject({
      objectiveId: f.objectiveIds[0],
      objectiveName: "63× / 1.40 oil",
      fileName: "s.tif",
      purpose: "routine",
      status: "done",
      version: 1,
      createdByName: expect.stringMatching(/^staff /),
      ratios: { lateral: 1.1, axial: 1.3 },
      verdict: "pass",
    });
    expect(done.finishedAt).not.toBeNull();
    expect(Date.parse(done.acquiredAt)).toBeLessThan(Date.now());
    expect(rows.find((m) => m.id === named["rerun on visit"])).toMatchObject({ version: 2, verdict: "fail" });
    const queued = rows.find((m) => m.id === named["pre-service on visit"])!;
    expect(queued).toMatchObject({ status: "queued", ratios: null, verdict: null, finishedAt: null });
    expect(rows.find((m) => m.id === named["routine by a deleted user"])!.createdByName).toBeNull();
    // Nothing from the full summary (the averaged PSF) comes along.
    expect(JSON.stringify(rows)).not.toContain("AAAA");
    expect(Object.keys(done).sort()).toEqual(
      [
        "acquiredAt",
        "createdAt",
        "createdByName",
        "fileName",
        "finishedAt",
        "id",
        "objectiveId",
        "objectiveName",
        "purpose",
        "ratios",
        "stackId",
        "status",
        "verdict",
        "version",
      ].sort(),
    );
  });

  it("filters by objective, purpose and status, and combines them", async () => {
    const byObjective = await listAll(f.actors.admin, { objectiveId: f.objectiveIds[1] });
    expect(byObjective).toHaveLength(6);
    expect(byObjective.every((m) => m.objectiveId === f.objectiveIds[1])).toBe(true);

    const samples = await listAll(f.actors.admin, { purpose: "sample" });
    expect(samples).toHaveLength(5);
    expect(samples.every((m) => m.purpose === "sample")).toBe(true);

    const done = await listAll(f.actors.admin, { status: "done" });
    expect(done).toHaveLength(9);
    expect(done.every((m) => m.status === "done")).toBe(true);

    const both = await listAll(f.actors.admin, {
      objectiveId: f.objectiveIds[1],
      purpose: "sample",
      status: "done",
    });
    expect(both.map((m) => m.id).toSorted()).toEqual(
      [named["second researcher's sample"], named["sample of a deleted user"]].toSorted(),
    );
    // Filters narrow the caller's view, never widen it: the researcher's samples are still only theirs.
    const researcherSamples = await listAll(f.actors.researcher, { purpose: "sample" });
    expect(researcherSamples.map((m) => m.id).toSorted()).toEqual(
      [named["researcher's sample on visit"], named["researcher's sample off visit"]].toSorted(),
    );
  });
});

describe("pages", () => {
  const TOTAL = 157;
  let expectedOrder: string[];

  beforeAll(async () => {
    const stack = await registerTinyStack(p.actors.staff);
    // 157 rows, in one statement (so one created_at for all), and 40 of them acquired at the
    // same instant: the id must break the ties. Every fifth is a staff sample the researcher
    // may not see, every third is on the second lens.
    const tie = new Date(Date.now() - 50 * DAY);
    await getDb()
      .insert(measurements)
      .values(
        Array.from({ length: TOTAL }, (_, i) => ({
          facilityId: p.facilityId,
          stackId: stack,
          objectiveId: p.objectiveIds[i % 3 === 0 ? 1 : 0],
          createdBy: p.actors.staff.userId,
          purpose: i % 5 === 0 ? ("sample" as const) : ("routine" as const),
          status: "done" as const,
          modality: "widefield" as const,
          parameters: {},
          acquiredAt: i < 40 ? tie : new Date(Date.now() - (i % 60) * DAY - i * 1000),
        })),
      );
    const all = await getDb()
      .select({ id: measurements.id })
      .from(measurements)
      .where(eq(measurements.facilityId, p.facilityId))
      .orderBy(desc(measurements.acquiredAt), desc(measurements.createdAt), desc(measurements.id));
    expectedOrder = all.map((r) => r.id);
    expect(expectedOrder).toHaveLength(TOTAL);
  });

  it("walks every row once, newest first, whatever the page size", async () => {
    for (const limit of [1, 7, 50, 156, 157, 200]) {
      const rows = await listAll(p.actors.admin, {}, limit);
      expect(
        rows.map((m) => m.id),
        `limit ${limit}`,
      ).toEqual(expectedOrder);
      const times = rows.map((m) => Date.parse(m.acquiredAt));
      expect(times).toEqual(times.toSorted((x, y) => y - x));
    }
  });

  it("the last page says next = null, and a full last page is followed by none", async () => {
    const first = await listMeasurements(getDb(), p.actors.admin, { limit: TOTAL - 1 });
    expect(first.next).not.toBeNull();
    const last = await listMeasurements(getDb(), p.actors.admin, { limit: TOTAL - 1, before: first.next! });
    expect(last).toMatchObject({ next: null });
    expect(last.measurements.map((m) => m.id)).toEqual([expectedOrder.at(-1)]);
    const exact = await listMeasurements(getDb(), p.actors.admin, { limit: TOTAL });
    expect(exact.next).toBeNull();
  });

  it("pages with filters and a researcher's view skip exactly the hidden rows", async () => {
    const hidden = new Set(
      (
        await getDb()
          .select({ id: measurements.id })
          .from(measurements)
          .where(and(eq(measurements.facilityId, p.facilityId), eq(measurements.purpose, "sample")))
      ).map((r) => r.id),
    );
    expect(hidden.size).toBe(32); // i = 0, 5, …, 155
    const seen = await listAll(p.actors.researcher, {}, 9);
    expect(seen.map((m) => m.id)).toEqual(expectedOrder.filter((id) => !hidden.has(id)));

    const onSecondLens = await listAll(p.actors.admin, { objectiveId: p.objectiveIds[1] }, 11);
    const secondLensIds = new Set(
      (
        await getDb()
          .select({ id: measurements.id })
          .from(measurements)
          .where(inArray(measurements.objectiveId, [p.objectiveIds[1]]))
      ).map((r) => r.id),
    );
    expect(secondLensIds.size).toBe(53); // i = 0, 3, …, 156
    expect(onSecondLens.map((m) => m.id)).toEqual(expectedOrder.filter((id) => secondLensIds.has(id)));
  });

  it("refuses a cursor it did not give out with bad_request", async () => {
    const good = (await listMeasurements(getDb(), p.actors.admin, { limit: 3 })).next!;
    const bad = [
      "not-a-cursor",
      "1; drop table measurements",
      good.replace(/_[0-9a-f-]{36}$/, "_zzzz"),
      good.toUpperCase(),
      // Well formed, but dates PostgreSQL would refuse (30 February, hour 24, year 0): a 400, not a 500.
      `2024-02-30T10:00:00.000000Z_2024-03-01T10:00:00.000000Z_${randomUUID()}`,
      `2024-01-01T24:00:00.000000Z_2024-01-01T10:00:00.000000Z_${randomUUID()}`,
      `0000-01-01T00:00:00.000000Z_2024-01-01T10:00:00.000000Z_${randomUUID()}`,
    ];
    for (const before of bad) {
      expect(
        await outcome(() => listMeasurements(getDb(), p.actors.admin, { limit: 3, before })),
        before,
      ).toBe("bad_request");
    }
    // A cursor from another facility's list is well formed: it only positions, it shows nothing of theirs.
    const foreignCursor = (await listMeasurements(getDb(), f.actors.admin, { limit: 1 })).next!;
    const afterForeign = await listAll(p.actors.admin, { before: foreignCursor });
    expect(afterForeign.every((m) => expectedOrder.includes(m.id))).toBe(true);
  });

  it("the query contract: limit 1–200, default 50; purpose and status from their enums", () => {
    const parse = (q: Record<string, string>) => measurementListQuerySchema.safeParse(q);
    expect(parse({}).data).toEqual({ limit: 50 });
    expect(parse({ limit: "200" }).data?.limit).toBe(200);
    for (const limit of ["0", "201", "1.5", "ten"]) {
      expect(parse({ limit }).error?.issues[0]?.message, limit).toBe(
        "limit must be a whole number from 1 to 200",
      );
    }
    expect(parse({ purpose: "calibration" }).success).toBe(false);
    expect(parse({ status: "finished" }).success).toBe(false);
    expect(parse({ objectiveId: "42" }).success).toBe(false);
    expect(parse({ before: "" }).success).toBe(false);
  });
});
