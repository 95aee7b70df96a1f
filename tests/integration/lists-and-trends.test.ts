/**
 * Bounded lists and the small trend summary (issue 8, quality gate 6): measurement lists page
 * with a keyset cursor, bead lists page by bead id, and trends read the generated
 * `trend_summary` instead of the ~90 kB summary. Invented data throughout.
 */
import { eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb, getDb } from "@/server/db/client";
import { beadResults, measurements } from "@/server/db/schema";
import { listMeasurementPage } from "@/server/db/queries/measurements";
import { getDashboard } from "@/server/services/dashboard";
import { getObjectiveTrend } from "@/server/services/logbook";
import { listBeads } from "@/server/services/measurements";
import { getObjectiveOverview, OBJECTIVE_MEASUREMENTS_PAGE } from "@/server/services/objective-overview";
import { makeFacility, registerTinyStack, type TestFacility } from "./helpers";

let f: TestFacility;
let stackId: string;
const DAY = 86_400_000;
/** 120 checks on the first objective; the 30 oldest share one acquisition time (ties the cursor must break). */
const N = 120;
let beadMeasurementId: string;

beforeAll(async () => {
  f = await makeFacility("lists");
  stackId = await registerTinyStack(f.actors.staff);
  const tie = new Date(Date.now() - 300 * DAY);
  await getDb()
    .insert(measurements)
    .values(
      Array.from({ length: N }, (_, i) => ({
        facilityId: f.facilityId,
        stackId,
        objectiveId: f.objectiveIds[0],
        createdBy: f.actors.staff.userId,
        purpose: "routine" as const,
        status: "done" as const,
        modality: "widefield" as const,
        parameters: {},
        summary: {
          ratios: { lateral: 1.1 + i / 1000, axial: 1.15 },
          headline: { lateralFwhmUm: 0.22, axialFwhmUm: 0.6, basis: "invented" },
          widths: { medianSnr: 80 + i, medianAxialAsymmetry: 0.01, fwhmX: { medianUm: 0.22 } },
          theory: { formulaId: "widefield-airy-nonparaxial-axial", formulaVersion: "1.0.0", notes: ["n"] },
          verdict: { level: "pass", headline: "invented", evidence: [] },
          beads: { found: 10, used: 9 },
          averagedPsf: { dataBase64: "A".repeat(50_000) },
        },
        acquiredAt: i < 30 ? tie : new Date(Date.now() - (200 - i) * DAY),
      })),
    );
  // One measurement with 25 beads for the bead pages.
  const [m] = await getDb()
    .select({ id: measurements.id })
    .from(measurements)
    .where(eq(measurements.objectiveId, f.objectiveIds[0]))
    .limit(1);
  beadMeasurementId = m!.id;
  await getDb()
    .insert(beadResults)
    .values(
      Array.from({ length: 25 }, (_, i) => ({
        measurementId: beadMeasurementId,
        beadIndex: i,
        xPx: i,
        yPx: i,
        zPx: 10,
        included: i % 5 !== 0,
        rejectReason: i % 5 === 0 ? "low_snr" : null,
      })),
    );
});

afterAll(async () => {
  await closeDb();
});

describe("measurement lists", () => {
  it("walks every measurement once, newest first, in pages joined by the cursor", async () => {
    const seen: string[] = [];
    const times: number[] = [];
    let before: string | undefined;
    for (let page = 0; page < 20; page++) {
      const rows = await listMeasurementPage(getDb(), {
        facilityId: f.facilityId,
        limit: 17,
        before,
      });
      seen.push(...rows.map((r) => r.id));
      times.push(...rows.map((r) => r.acquiredAt.getTime()));
      if (rows.length < 17) break;
      before = rows.at(-1)!.cursor;
    }
    expect(seen).toHaveLength(N);
    expect(new Set(seen).size).toBe(N);
    expect(times).toEqual([...times].sort((a, b) => b - a));
  });

  it("rejects a cursor it did not make", async () => {
    await expect(
      listMeasurementPage(getDb(), { facilityId: f.facilityId, limit: 5, before: "1; drop" }),
    ).rejects.toThrow(RangeError);
  });

  it("the objective page shows one page, the count and the next cursor; a bad cursor shows page one", async () => {
    const first = await getObjectiveOverview(getDb(), f.actors.staff, f.objectiveIds[0]);
    expect(first.measurements).toHaveLength(OBJECTIVE_MEASUREMENTS_PAGE);
    expect(first.measurementCount).toBe(N);
    expect(first.nextCursor).toBe(first.measurements.at(-1)!.cursor);
    const second = await getObjectiveOverview(getDb(), f.actors.staff, f.objectiveIds[0], undefined, {
      before: first.nextCursor!,
    });
    expect(second.measurements[0]!.id).not.toBe(first.measurements[0]!.id);
    expect(new Set([...first.measurements, ...second.measurements].map((m) => m.id)).size).toBe(
      2 * OBJECTIVE_MEASUREMENTS_PAGE,
    );
    const bad = await getObjectiveOverview(getDb(), f.actors.staff, f.objectiveIds[0], undefined, {
      before: "not-a-cursor",
    });
    expect(bad.measurements.map((m) => m.id)).toEqual(first.measurements.map((m) => m.id));
  });

  it("researchers' lists hold only their own measurements", async () => {
    const page = await getObjectiveOverview(getDb(), f.actors.researcher, f.objectiveIds[0]);
    expect(page.measurements).toEqual([]);
    expect(page.measurementCount).toBe(0);
  });
});

describe("bead lists", () => {
  it("pages by bead id and ends with next = null", async () => {
    const ids: number[] = [];
    let after: number | undefined;
    let pages = 0;
    for (;;) {
      const page = await listBeads(getDb(), f.actors.staff, beadMeasurementId, { limit: 10, after });
      ids.push(...page.beads.map((b) => b.beadIndex));
      pages++;
      if (page.next === null) break;
      after = page.next;
    }
    expect(pages).toBe(3);
    expect(ids).toEqual(Array.from({ length: 25 }, (_, i) => i));
  });

  it("without a page, returns every bead (the CSV export)", async () => {
    const all = await listBeads(getDb(), f.actors.staff, beadMeasurementId);
    expect(all).toHaveLength(25);
  });
});

describe("trend summary", () => {
  it("is generated from the summary with only what trends read", async () => {
    const [row] = await getDb()
      .select({ t: measurements.trendSummary })
      .from(measurements)
      .where(eq(measurements.id, beadMeasurementId));
    const t = row!.t as Record<string, unknown>;
    expect(Object.keys(t).sort()).toEqual(
      [
        "beads",
        "effectiveRi",
        "engineVersion",
        "headline",
        "ratios",
        "shape",
        "theory",
        "verdict",
        "widths",
      ].sort(),
    );
    expect(t.widths).toEqual({ medianSnr: expect.any(Number), medianAxialAsymmetry: 0.01 });
    expect(t.verdict).toEqual({ level: "pass" });
    expect(t.theory).toEqual({ formulaId: "widefield-airy-nonparaxial-axial", formulaVersion: "1.0.0" });
    expect(JSON.stringify(t).length).toBeLessThan(1000);
  });

  it("is null while there is no summary, and follows a later summary", async () => {
    const [m] = await getDb()
      .insert(measurements)
      .values({
        facilityId: f.facilityId,
        stackId,
        objectiveId: f.objectiveIds[1],
        purpose: "routine",
        modality: "widefield",
        parameters: {},
      })
      .returning();
    expect(m!.trendSummary).toBeNull();
    const [done] = await getDb()
      .update(measurements)
      .set({ status: "done", summary: { ratios: { lateral: 1.3, axial: 1.4 } } })
      .where(eq(measurements.id, m!.id))
      .returning();
    expect((done!.trendSummary as { ratios: unknown }).ratios).toEqual({ lateral: 1.3, axial: 1.4 });
  });

  it("carries the shape and field figures, judged against the epoch's baseline", async () => {
    // Invented checks on a lens of its own: lateral asymmetry steady near 0.95, then 0.70 (an
    // elongated PSF, e.g. a decentred element); planarity steady near 0.5 µm.
    const lar = [0.95, 0.97, 0.93, 0.96, 0.95, 0.7];
    const planarity = [0.5, 0.55, 0.48, 0.52, 0.5, 0.53];
    const g = await makeFacility("shape-trend");
    const gStack = await registerTinyStack(g.actors.staff);
    const ids: string[] = [];
    for (const [i, a] of lar.entries()) {
      const [row] = await getDb()
        .insert(measurements)
        .values({
          facilityId: g.facilityId,
          stackId: gStack,
          objectiveId: g.objectiveIds[0],
          purpose: "routine",
          status: "done",
          modality: "widefield",
          parameters: {},
          summary: {
            ratios: { lateral: 1.1, axial: 1.2 },
            field: {
              full: { medianLateralAsymmetry: a },
              plane: { planarityPeakToValleyUm: planarity[i], tiltUmPerUm: 0.002 },
            },
          },
          acquiredAt: new Date(Date.now() - ((lar.length - 1 - i) * 30 + 1) * 86_400_000),
        })
        .returning({ id: measurements.id, t: measurements.trendSummary });
      expect(row!.t).toMatchObject({
        shape: { lateralAsymmetry: a, planarityUm: planarity[i], tiltUmPerUm: 0.002 },
      });
      ids.push(row!.id);
    }
    const trend = await getObjectiveTrend(getDb(), g.actors.staff, g.objectiveIds[0]);
    expect(trend.points.map((p) => p.lateralAsymmetry)).toEqual(lar);
    // Source: NIST/SEMATECH §6.3.2.2 individuals chart over the first 5 (the baseline block):
    // x̄ = 0.952, MR̄ = 0.025, lower limit x̄ − 3·MR̄/1.128.
    expect(trend.shape.lateralAsymmetry.centre).toBeCloseTo(0.952, 10);
    expect(trend.shape.lateralAsymmetry.lower3).toBeCloseTo(0.952 - (3 * 0.025) / 1.128, 10);
    expect(trend.shape.lateralAsymmetry.beyond).toEqual([ids[5]]);
    expect(trend.shape.planarityUm.beyond).toEqual([]);
    // Advisory: the ratios are steady, so the status stays in spec.
    expect(trend.status.status).toBe("in spec");
  });

  it("feeds the trend points and the dashboard", async () => {
    const trend = await getObjectiveTrend(getDb(), f.actors.staff, f.objectiveIds[0]);
    expect(trend.points).toHaveLength(N);
    const last = trend.points.at(-1)!;
    expect(last.medianSnr).toBe(80 + N - 1);
    expect(last.lateralRatio).toBeCloseTo(1.1 + (N - 1) / 1000, 12);
    expect(last.formulaId).toBe("widefield-airy-nonparaxial-axial@1.0.0");
    expect(trend.slopePerMonth.lateral.slope).toBeGreaterThan(0);
    const dash = await getDashboard(getDb(), f.actors.staff);
    const o = dash.objectives.find((x) => x.id === f.objectiveIds[0])!;
    expect(o.ratios).toEqual({ lateral: last.lateralRatio, axial: last.axialRatio });
    expect(o.status.status).toBe(trend.status.status);
    expect(dash.recent).toHaveLength(10);
  });
});
