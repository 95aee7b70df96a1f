import { describe, expect, it } from "vitest";
import { checkReminders, type ReminderObjective } from "@/lib/qc/check-reminders";
import { computeObjectiveStatus } from "@/lib/qc/objective-status";

// Invented objectives and instruments; the dates are arbitrary.
const now = new Date("2026-12-01T07:00:00Z");
const DAY = 86_400_000;
const daysAgo = (d: number) => new Date(now.getTime() - d * DAY);

function obj(
  id: string,
  lastCheckAt: Date | null,
  checkIntervalDays = 30,
  instrumentName: string | null = "Scope A",
) {
  return {
    id,
    name: `Lens ${id}`,
    instrumentName,
    checkIntervalDays,
    lastCheckAt,
  } satisfies ReminderObjective;
}

describe("checkReminders", () => {
  it("sorts objectives into overdue, due soon and never checked, leaving the rest out", () => {
    const r = checkReminders(
      [
        obj("fresh", daysAgo(2)), // due in 28 days: not mentioned
        obj("late", daysAgo(45)), // 15 days late
        obj("soon", daysAgo(26)), // due in 4 days
        obj("new", null),
      ],
      { now },
    );
    expect(r.overdue.map((i) => i.objectiveId)).toEqual(["late"]);
    expect(r.dueSoon.map((i) => i.objectiveId)).toEqual(["soon"]);
    expect(r.neverChecked.map((i) => i.objectiveId)).toEqual(["new"]);
    expect(r.total).toBe(3);
    expect(r.overdue[0]!.days).toBe(15);
    expect(r.overdue[0]!.line).toBe(
      "Lens late on Scope A: overdue by 15 days (last check 2026-10-17, one every 30 days).",
    );
    expect(r.dueSoon[0]!.days).toBe(4);
    expect(r.dueSoon[0]!.line).toBe(
      "Lens soon on Scope A: due in 4 days (2026-12-05); last check 2026-11-05.",
    );
    expect(r.neverChecked[0]!.line).toMatch(/no bead check recorded yet/);
  });

  it("agrees with the objective status on what is overdue", () => {
    // Source: our own rule in objective-status.ts — overdue once now is past last check + interval.
    for (const d of [29, 30, 30.01, 31, 60]) {
      const o = obj("x", daysAgo(d));
      const status = computeObjectiveStatus({
        now,
        lastCheckAt: o.lastCheckAt,
        checkIntervalDays: 30,
        latestRatios: { lateral: 1.1, axial: 1.2 },
        limits: { lateral: 1.5, axial: 1.5 },
      });
      const r = checkReminders([o], { now });
      expect(r.overdue.length === 1, `${d} days ago`).toBe(status.status === "overdue");
    }
  });

  it("says today, tomorrow and the window edge in calendar days", () => {
    const r = checkReminders(
      [
        obj("due-at-0", daysAgo(30)), // exactly due now: not yet overdue
        obj("today", new Date(now.getTime() - 30 * DAY + 5 * 3600_000)), // 12:00 today
        obj("tomorrow", new Date(now.getTime() - 30 * DAY + 20 * 3600_000)), // 03:00 tomorrow
        obj("edge", daysAgo(23)), // exactly 7 days ahead
        obj("beyond", new Date(now.getTime() - 23 * DAY + 60_000)), // 7 days and 1 minute ahead
      ],
      { now },
    );
    const byId = new Map(r.dueSoon.map((i) => [i.objectiveId, i]));
    expect(r.overdue).toHaveLength(0);
    expect(byId.get("due-at-0")!.line).toContain("due today");
    expect(byId.get("today")!.line).toContain("due today");
    expect(byId.get("tomorrow")!.line).toContain("due tomorrow (2026-12-02)");
    expect(byId.get("edge")!.days).toBe(7);
    expect(byId.has("beyond")).toBe(false);
  });

  it("uses the facility's time zone for dates", () => {
    // 2026-12-01T07:00Z is still 30 November in Los Angeles (UTC−8).
    const o = obj("tz", new Date("2026-11-01T04:00:00Z"), 30); // due 2026-12-01T04:00Z → overdue 3 h
    const utc = checkReminders([o], { now });
    const la = checkReminders([o], { now, timeZone: "America/Los_Angeles" });
    expect(utc.overdue[0]!.line).toContain("overdue since today (last check 2026-11-01");
    expect(la.overdue[0]!.line).toContain("last check 2026-10-31");
  });

  it("orders the most overdue first and handles objectives without an instrument", () => {
    const r = checkReminders([obj("a", daysAgo(35)), obj("b", daysAgo(90), 30, null)], { now });
    expect(r.overdue.map((i) => i.objectiveId)).toEqual(["b", "a"]);
    expect(r.overdue[0]!.line.startsWith("Lens b (no instrument): overdue by 60 days")).toBe(true);
    expect(r.overdue[1]!.line).toContain("overdue by 5 days");
  });

  it("honours a custom window and reports an empty result", () => {
    const objectives = [obj("soon", daysAgo(26))];
    expect(checkReminders(objectives, { now, windowDays: 2 }).total).toBe(0);
    expect(checkReminders([], { now })).toEqual({ overdue: [], dueSoon: [], neverChecked: [], total: 0 });
  });

  it("does not mutate its input", () => {
    const objectives = [obj("b", daysAgo(90)), obj("a", daysAgo(35))];
    const copy = structuredClone(objectives);
    checkReminders(objectives, { now });
    expect(objectives).toEqual(copy);
  });

  it("rejects bad arguments by name", () => {
    expect(() => checkReminders([obj("z", null, 0)], { now })).toThrow(/checkIntervalDays/);
    expect(() => checkReminders([], { now, windowDays: -1 })).toThrow(/windowDays/);
    expect(() => checkReminders([], { now: new Date("nope") })).toThrow(/now/);
  });
});
