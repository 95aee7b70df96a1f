/**
 * The weekly summary for a facility's admins: which checks were done in the last
 * 7 days (with their verdicts), which objectives changed status, which are out of
 * spec now and which checks are overdue — selected, ordered and worded here, with
 * no I/O and the clock passed in.
 */
import type { ObjectiveStatus } from "./objective-status";
import type { VerdictLevel } from "./measurement-verdict";

export interface WeeklyDigestCheck {
  measurementId: string;
  objectiveName: string;
  instrumentName: string | null;
  purpose: string;
  acquiredAt: Date;
  /** The stored verdict level, or null when the check has none. */
  verdict: VerdictLevel | null;
}

export interface WeeklyDigestObjective {
  id: string;
  name: string;
  instrumentName: string | null;
  /** Status at the start of the window and now. */
  statusBefore: ObjectiveStatus;
  statusNow: ObjectiveStatus;
  /** The reason given for the current status. */
  reasonNow: string;
}

export interface WeeklyDigestInput {
  now: Date;
  checks: WeeklyDigestCheck[];
  objectives: WeeklyDigestObjective[];
  /** Overdue checks, one worded line each (same rule as the daily reminders). */
  overdue: Array<{ line: string }>;
}

export interface WeeklyDigestOptions {
  /** Length of the window ending at `now`. @default 7 (days) */
  days?: number;
}

export interface WeeklyDigestSection {
  title: string;
  lines: string[];
  /** What to say when the section has no lines. */
  empty: string;
}

export interface WeeklyDigest {
  /** ISO 8601 week of `now`, e.g. "2026-W49". */
  week: string;
  from: Date;
  to: Date;
  counts: {
    checks: number;
    pass: number;
    fail: number;
    other: number;
    statusChanges: number;
    outOfSpec: number;
    overdue: number;
  };
  /** A short summary for the subject line. */
  headline: string;
  sections: WeeklyDigestSection[];
}

const DAY_MS = 86_400_000;

/** ISO 8601 week (Monday first; week 1 holds the year's first Thursday) of a UTC instant. */
export function isoWeek(date: Date): string {
  if (!(date instanceof Date) || Number.isNaN(date.getTime()))
    throw new TypeError("isoWeek: date must be a valid Date");
  const d = new Date(Date.UTC(date.getUTCFullYear(), date.getUTCMonth(), date.getUTCDate()));
  const weekday = d.getUTCDay() || 7; // Monday 1 … Sunday 7
  d.setUTCDate(d.getUTCDate() + 4 - weekday); // the Thursday of this week decides the year
  const year = d.getUTCFullYear();
  const week = Math.ceil(((d.getTime() - Date.UTC(year, 0, 1)) / DAY_MS + 1) / 7);
  return `${year}-W${String(week).padStart(2, "0")}`;
}

const VERDICT_WORDS: Record<VerdictLevel, string> = {
  pass: "pass",
  fail: "FAIL (out of spec)",
  check: "check the metadata",
  insufficient: "not enough beads or sampling for a verdict",
};

function lens(name: string, instrumentName: string | null): string {
  return instrumentName ? `${name} on ${instrumentName}` : name;
}

function day(d: Date): string {
  return d.toISOString().slice(0, 10);
}

/** Select and word the week's summary. */
export function buildWeeklyDigest(input: WeeklyDigestInput, options: WeeklyDigestOptions = {}): WeeklyDigest {
  const { days = 7 } = options;
  if (!(days > 0)) throw new RangeError(`days must be > 0, got ${days}`);
  const { now } = input;
  if (!(now instanceof Date) || Number.isNaN(now.getTime())) throw new TypeError("now must be a valid Date");
  const from = new Date(now.getTime() - days * DAY_MS);

  const checks = input.checks
    .filter((c) => c.acquiredAt.getTime() > from.getTime() && c.acquiredAt.getTime() <= now.getTime())
    .sort((a, b) => a.acquiredAt.getTime() - b.acquiredAt.getTime());
  // Failures first, so they are not lost in a long list.
  const failed = checks.filter((c) => c.verdict === "fail");
  const rest = checks.filter((c) => c.verdict !== "fail");
  const checkLines = [...failed, ...rest].map(
    (c) =>
      `${day(c.acquiredAt)} ${lens(c.objectiveName, c.instrumentName)} (${c.purpose}): ${
        c.verdict ? VERDICT_WORDS[c.verdict] : "no verdict"
      }`,
  );

  const byName = (a: WeeklyDigestObjective, b: WeeklyDigestObjective) =>
    lens(a.name, a.instrumentName).localeCompare(lens(b.name, b.instrumentName));
  const changed = input.objectives.filter((o) => o.statusBefore !== o.statusNow).sort(byName);
  const outOfSpec = input.objectives.filter((o) => o.statusNow === "out of spec").sort(byName);

  const pass = checks.filter((c) => c.verdict === "pass").length;
  const counts = {
    checks: checks.length,
    pass,
    fail: failed.length,
    other: checks.length - pass - failed.length,
    statusChanges: changed.length,
    outOfSpec: outOfSpec.length,
    overdue: input.overdue.length,
  };
  const headline =
    [
      `${counts.checks} check${counts.checks === 1 ? "" : "s"}`,
      counts.fail ? `${counts.fail} failed` : null,
      counts.outOfSpec ? `${counts.outOfSpec} out of spec` : null,
      counts.overdue ? `${counts.overdue} overdue` : null,
    ]
      .filter(Boolean)
      .join(", ") || "nothing to report";

  return {
    week: isoWeek(now),
    from,
    to: now,
    counts,
    headline,
    sections: [
      {
        title: `Checks done (${counts.checks}: ${pass} pass, ${counts.fail} fail, ${counts.other} other)`,
        lines: checkLines,
        empty: "No bead checks were recorded in the last 7 days.",
      },
      {
        title: "Status changes",
        lines: changed.map((o) => `${lens(o.name, o.instrumentName)}: ${o.statusBefore} → ${o.statusNow}`),
        empty: "No objective changed status.",
      },
      {
        title: "Out of spec now",
        lines: outOfSpec.map((o) => `${lens(o.name, o.instrumentName)}: ${o.reasonNow}`),
        empty: "No objective is out of spec.",
      },
      {
        title: "Overdue checks",
        lines: input.overdue.map((o) => o.line),
        empty: "No check is overdue.",
      },
    ],
  };
}
