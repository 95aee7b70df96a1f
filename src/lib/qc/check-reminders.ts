/**
 * Which bead checks a facility should be reminded of: overdue ones, ones falling
 * due within the next few days, and objectives that have never been checked, each
 * with one plain-language line for a digest mail.
 *
 * Notes: an objective's next check is due `checkIntervalDays` after its latest
 * completed check, and it is overdue once that moment has passed — the same rule
 * as `computeObjectiveStatus`, so the digest and the dashboard agree. Days late are
 * whole elapsed days since the due moment; days left are calendar days in
 * `timeZone` between today and the due date, so "tomorrow" means the next date on
 * the wall clock.
 */
export interface ReminderObjective {
  id: string;
  name: string;
  instrumentName: string | null;
  checkIntervalDays: number;
  /** When the latest completed check was acquired; null when there is none. */
  lastCheckAt: Date | null;
}

export interface CheckRemindersOptions {
  /** The clock, injected so the function stays pure. */
  now: Date;
  /** How far ahead a check counts as "due soon", in days. @default 7 */
  windowDays?: number;
  /** IANA time zone used to print dates and decide "today". @default "UTC" */
  timeZone?: string;
}

export type ReminderKind = "overdue" | "due-soon" | "never-checked";

export interface ReminderItem {
  kind: ReminderKind;
  objectiveId: string;
  objectiveName: string;
  instrumentName: string | null;
  /** When the check is (or was) due; null for an objective never checked. */
  dueAt: Date | null;
  /** Whole days past the due moment (overdue), or calendar days left (due soon); 0 otherwise. */
  days: number;
  /** One line for the digest, in plain words. */
  line: string;
}

export interface CheckReminders {
  /** Most days late first. */
  overdue: ReminderItem[];
  /** Soonest first. */
  dueSoon: ReminderItem[];
  /** By name. */
  neverChecked: ReminderItem[];
  /** Number of items in all three lists. */
  total: number;
}

const DAY_MS = 86_400_000;

function dayString(d: Date, timeZone: string): string {
  // en-CA prints ISO-style YYYY-MM-DD.
  return new Intl.DateTimeFormat("en-CA", {
    timeZone,
    year: "numeric",
    month: "2-digit",
    day: "2-digit",
  }).format(d);
}

function label(o: ReminderObjective): string {
  return o.instrumentName ? `${o.name} on ${o.instrumentName}` : `${o.name} (no instrument)`;
}

function plural(n: number, word: string): string {
  return `${n} ${word}${n === 1 ? "" : "s"}`;
}

/**
 * Sort an objective list into overdue, due-soon and never-checked reminders.
 *
 * @param objectives - active objectives of one facility (retired ones should be left out by the caller)
 * @param options - the clock, the look-ahead window in days and the time zone for dates
 * @returns the three lists with a line each, and their total
 * @throws RangeError when `windowDays` is negative or an objective's `checkIntervalDays` is not > 0
 * @example
 * checkReminders([{ id: "o1", name: "63× oil", instrumentName: "Scope A", checkIntervalDays: 30,
 *   lastCheckAt: new Date("2026-10-01") }], { now: new Date("2026-11-05") }).overdue[0].days // 5
 */
export function checkReminders(
  objectives: ReminderObjective[],
  options: CheckRemindersOptions,
): CheckReminders {
  const { now, windowDays = 7, timeZone = "UTC" } = options;
  if (!(now instanceof Date) || Number.isNaN(now.getTime())) throw new TypeError("now must be a valid Date");
  if (!(windowDays >= 0)) throw new RangeError(`windowDays must be >= 0, got ${windowDays}`);
  const nowMs = now.getTime();
  const today = dayString(now, timeZone);
  const overdue: ReminderItem[] = [];
  const dueSoon: ReminderItem[] = [];
  const neverChecked: ReminderItem[] = [];

  for (const o of objectives) {
    if (!(o.checkIntervalDays > 0)) {
      throw new RangeError(`checkIntervalDays of objective ${o.id} must be > 0, got ${o.checkIntervalDays}`);
    }
    const base = { objectiveId: o.id, objectiveName: o.name, instrumentName: o.instrumentName };
    if (!o.lastCheckAt) {
      neverChecked.push({
        ...base,
        kind: "never-checked",
        dueAt: null,
        days: 0,
        line: `${label(o)}: no bead check recorded yet — a first check is due.`,
      });
      continue;
    }
    const dueAt = new Date(o.lastCheckAt.getTime() + o.checkIntervalDays * DAY_MS);
    const lastDay = dayString(o.lastCheckAt, timeZone);
    const dueDay = dayString(dueAt, timeZone);
    if (nowMs > dueAt.getTime()) {
      const days = Math.floor((nowMs - dueAt.getTime()) / DAY_MS);
      const late = days === 0 ? "overdue since today" : `overdue by ${plural(days, "day")}`;
      overdue.push({
        ...base,
        kind: "overdue",
        dueAt,
        days,
        line: `${label(o)}: ${late} (last check ${lastDay}, one every ${plural(o.checkIntervalDays, "day")}).`,
      });
    } else if (dueAt.getTime() - nowMs <= windowDays * DAY_MS) {
      // Calendar days in the facility's zone, so "tomorrow" means the next date on the wall.
      const days = Math.round((Date.parse(dueDay) - Date.parse(today)) / DAY_MS);
      const when =
        days === 0
          ? "due today"
          : days === 1
            ? `due tomorrow (${dueDay})`
            : `due in ${days} days (${dueDay})`;
      dueSoon.push({
        ...base,
        kind: "due-soon",
        dueAt,
        days,
        line: `${label(o)}: ${when}; last check ${lastDay}.`,
      });
    }
  }

  overdue.sort(
    (a, b) => a.dueAt!.getTime() - b.dueAt!.getTime() || a.objectiveName.localeCompare(b.objectiveName),
  );
  dueSoon.sort(
    (a, b) => a.dueAt!.getTime() - b.dueAt!.getTime() || a.objectiveName.localeCompare(b.objectiveName),
  );
  neverChecked.sort((a, b) => a.objectiveName.localeCompare(b.objectiveName));
  return { overdue, dueSoon, neverChecked, total: overdue.length + dueSoon.length + neverChecked.length };
}
