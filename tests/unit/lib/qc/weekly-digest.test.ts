import { describe, expect, it } from "vitest";
import { buildWeeklyDigest, isoWeek, type WeeklyDigestObjective } from "@/lib/qc/weekly-digest";

// Invented lenses and instruments; the dates are arbitrary.
const now = new Date("2026-12-07T07:00:00Z"); // a Monday
const DAY = 86_400_000;
const daysAgo = (d: number) => new Date(now.getTime() - d * DAY);

function objective(over: Partial<WeeklyDigestObjective>): WeeklyDigestObjective {
  return {
    id: "o",
    name: "Lens",
    instrumentName: "Scope A",
    statusBefore: "in spec",
    statusNow: "in spec",
    reasonNow: "Within limits.",
    ...over,
  };
}

describe("isoWeek", () => {
  // Source: ISO 8601 week dates (weeks start on Monday; week 1 contains the first Thursday).
  it("numbers weeks the ISO way, across year ends", () => {
    expect(isoWeek(new Date("2026-12-07T07:00:00Z"))).toBe("2026-W50");
    expect(isoWeek(new Date("2026-12-06T23:59:59Z"))).toBe("2026-W49"); // Sunday closes the week
    expect(isoWeek(new Date("2021-01-03T12:00:00Z"))).toBe("2020-W53");
    expect(isoWeek(new Date("2024-12-30T00:00:00Z"))).toBe("2025-W01");
    expect(isoWeek(new Date("2026-01-01T00:00:00Z"))).toBe("2026-W01");
  });

  it("refuses an invalid date", () => {
    expect(() => isoWeek(new Date("nope"))).toThrow(TypeError);
  });
});

describe("buildWeeklyDigest", () => {
  const input = {
    now,
    checks: [
      {
        measurementId: "m1",
        objectiveName: "63× / 1.40 oil",
        instrumentName: "Scope A",
        purpose: "routine",
        acquiredAt: daysAgo(5),
        verdict: "pass" as const,
      },
      {
        measurementId: "m2",
        objectiveName: "40× / 0.95 air",
        instrumentName: "Scope B",
        purpose: "routine",
        acquiredAt: daysAgo(2),
        verdict: "fail" as const,
      },
      {
        measurementId: "old",
        objectiveName: "63× / 1.40 oil",
        instrumentName: "Scope A",
        purpose: "routine",
        acquiredAt: daysAgo(8), // outside the 7-day window
        verdict: "fail" as const,
      },
      {
        measurementId: "m3",
        objectiveName: "20× / 0.80 air",
        instrumentName: null,
        purpose: "baseline",
        acquiredAt: daysAgo(1),
        verdict: null,
      },
    ],
    objectives: [
      objective({ id: "a", name: "63× / 1.40 oil" }),
      objective({
        id: "b",
        name: "40× / 0.95 air",
        instrumentName: "Scope B",
        statusBefore: "in spec",
        statusNow: "out of spec",
        reasonNow: "Latest check: lateral FWHM is 2.00× theory (limit 1.50).",
      }),
      objective({ id: "c", name: "10× / 0.30 air", statusBefore: "overdue", statusNow: "overdue" }),
    ],
    overdue: [{ line: "10× / 0.30 air on Scope A: overdue by 4 days" }],
  };

  it("lists the window's checks with verdicts, failures first, and leaves older ones out", () => {
    const d = buildWeeklyDigest(input);
    expect(d.week).toBe("2026-W50");
    expect(d.from.toISOString()).toBe("2026-11-30T07:00:00.000Z");
    const checks = d.sections[0]!;
    expect(checks.lines).toEqual([
      "2026-12-05 40× / 0.95 air on Scope B (routine): FAIL (out of spec)",
      "2026-12-02 63× / 1.40 oil on Scope A (routine): pass",
      "2026-12-06 20× / 0.80 air (baseline): no verdict",
    ]);
    expect(checks.title).toBe("Checks done (3: 1 pass, 1 fail, 1 other)");
    expect(d.counts).toEqual({
      checks: 3,
      pass: 1,
      fail: 1,
      other: 1,
      statusChanges: 1,
      outOfSpec: 1,
      overdue: 1,
    });
    expect(d.headline).toBe("3 checks, 1 failed, 1 out of spec, 1 overdue");
  });

  it("reports status changes, open out-of-spec objectives and overdue checks", () => {
    const d = buildWeeklyDigest(input);
    const [, changes, out, overdue] = d.sections;
    expect(changes!.lines).toEqual(["40× / 0.95 air on Scope B: in spec → out of spec"]);
    expect(out!.lines).toEqual([
      "40× / 0.95 air on Scope B: Latest check: lateral FWHM is 2.00× theory (limit 1.50).",
    ]);
    expect(overdue!.lines).toEqual(["10× / 0.30 air on Scope A: overdue by 4 days"]);
  });

  it("says so when a quiet week has nothing to report", () => {
    const d = buildWeeklyDigest({ now, checks: [], objectives: [objective({})], overdue: [] });
    expect(d.headline).toBe("0 checks");
    expect(d.sections.every((s) => s.lines.length === 0)).toBe(true);
    expect(d.sections[0]!.empty).toMatch(/No bead checks/);
  });

  it("checks its arguments", () => {
    expect(() => buildWeeklyDigest({ ...input, now: new Date(NaN) })).toThrow(TypeError);
    expect(() => buildWeeklyDigest(input, { days: 0 })).toThrow(RangeError);
  });
});
