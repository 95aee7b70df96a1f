/**
 * The weekly summary for each facility's admins (Monday 07:00 UTC): checks done in
 * the last 7 days with their verdicts, objectives whose status changed, objectives
 * out of spec now and overdue checks. Sent once per facility per ISO week: an
 * `audit_log` row `weekly_digest.sent` with `details.week`, checked, sent and
 * written in one transaction under a per-facility-and-week advisory lock (the same
 * pattern as the daily reminders), so a retry or a second worker does not mail twice.
 */
import { and, eq, sql } from "drizzle-orm";
import { buildWeeklyDigest, isoWeek, type WeeklyDigest } from "../../lib/qc/weekly-digest";
import type { VerdictLevel } from "../../lib/qc";
import type { Db } from "../db/client";
import { forEachFacility } from "./for-each-facility";
import { auditLog } from "../db/schema";
import { insertAuditEntry } from "../db/queries/audit";
import { listInstrumentsByFacility, listObjectivesByFacility } from "../db/queries/instruments";
import { listChecksByObjective, listEventsByObjective } from "../db/queries/logbook";
import { listMailRecipients } from "../db/queries/users";
import { weeklyDigestMail } from "../mail/templates";
import { appUrl } from "../../env";
import { buildTrend } from "./logbook";
import { sendToEachWithUnsubscribe } from "./mail-preferences";
import { buildFacilityReminders } from "./reminders";

export const WEEKLY_DIGEST_ACTION = "weekly_digest.sent";
const WINDOW_DAYS = 7;
const DAY_MS = 86_400_000;

export type WeeklyDigestOutcome = "sent" | "already_sent" | "no_recipients" | "failed";

export interface WeeklyDigestRun {
  facilityId: string;
  facilityName: string;
  week: string;
  outcome: WeeklyDigestOutcome;
  recipients: number;
}

/** Gather one facility's last 7 days and word them (active objectives only). */
export async function buildFacilityWeeklyDigest(
  db: Db,
  facility: { id: string; timezone: string },
  now = new Date(),
): Promise<WeeklyDigest> {
  const from = new Date(now.getTime() - WINDOW_DAYS * DAY_MS);
  const [objs, instruments] = await Promise.all([
    listObjectivesByFacility(db, { facilityId: facility.id }),
    listInstrumentsByFacility(db, { facilityId: facility.id }),
  ]);
  const active = objs.filter((o) => !o.retired);
  const ids = active.map((o) => o.id);
  const [checks, events, reminders] = await Promise.all([
    listChecksByObjective(db, { objectiveIds: ids }),
    listEventsByObjective(db, { objectiveIds: ids }),
    buildFacilityReminders(db, facility.id, now, facility.timezone),
  ]);
  const instrumentName = new Map(instruments.map((i) => [i.id, i.name]));
  const nameOf = (instrumentId: string | null) =>
    instrumentId ? (instrumentName.get(instrumentId) ?? null) : null;
  const objective = new Map(active.map((o) => [o.id, o]));
  const upTo = (t: Date) => ({
    checks: checks.filter((c) => c.acquiredAt.getTime() <= t.getTime()),
    events: events.filter((e) => e.occurredAt.getTime() <= t.getTime()),
  });
  const before = upTo(from);
  const current = upTo(now);

  // A re-run chain counts once, with its latest analysis.
  const latest = new Map<string, (typeof checks)[number]>();
  for (const c of current.checks) {
    const root = c.parentId ?? c.id;
    const prev = latest.get(root);
    if (!prev || c.version > prev.version) latest.set(root, c);
  }

  return buildWeeklyDigest(
    {
      now,
      checks: [...latest.values()].map((c) => {
        const o = objective.get(c.objectiveId)!;
        const level = (c.summary as { verdict?: { level?: VerdictLevel } } | null)?.verdict?.level ?? null;
        return {
          measurementId: c.id,
          objectiveName: o.name,
          instrumentName: nameOf(o.instrumentId),
          purpose: c.purpose,
          acquiredAt: c.acquiredAt,
          verdict: level,
        };
      }),
      objectives: active.map((o) => {
        const mine = (s: typeof before) => ({
          checks: s.checks.filter((c) => c.objectiveId === o.id),
          events: s.events.filter((e) => e.objectiveId === o.id),
        });
        const b = mine(before);
        const n = mine(current);
        const then = buildTrend(o, b.checks, b.events, from).status;
        const nowStatus = buildTrend(o, n.checks, n.events, now).status;
        return {
          id: o.id,
          name: o.name,
          instrumentName: nameOf(o.instrumentId),
          statusBefore: then.status,
          statusNow: nowStatus.status,
          reasonNow: nowStatus.reason,
        };
      }),
      overdue: reminders.overdue,
    },
    { days: WINDOW_DAYS },
  );
}

/** Send one facility's summary for `now`'s ISO week, unless it was already sent. */
export async function sendFacilityWeeklyDigest(
  db: Db,
  facility: { id: string; name: string; timezone: string },
  now = new Date(),
): Promise<WeeklyDigestRun> {
  const week = isoWeek(now);
  const base = { facilityId: facility.id, facilityName: facility.name, week };
  const digest = await buildFacilityWeeklyDigest(db, facility, now);
  return db.transaction(async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(hashtext(${`weekly-digest:${facility.id}:${week}`}))`);
    const [already] = await tx
      .select({ id: auditLog.id })
      .from(auditLog)
      .where(
        and(
          eq(auditLog.facilityId, facility.id),
          eq(auditLog.action, WEEKLY_DIGEST_ACTION),
          sql`${auditLog.details}->>'week' = ${week}`,
        ),
      )
      .limit(1);
    if (already) return { ...base, outcome: "already_sent" as const, recipients: 0 };
    const people = await listMailRecipients(tx, {
      facilityId: facility.id,
      roles: ["admin"],
      kind: "weekly_digest",
    });
    if (people.length === 0) return { ...base, outcome: "no_recipients" as const, recipients: 0 };
    const mail = weeklyDigestMail({
      facilityName: facility.name,
      week,
      sections: digest.sections,
      headline: digest.headline,
      dashboardUrl: appUrl(`/dashboard`),
    });
    const sent = await sendToEachWithUnsubscribe(people, facility.id, "weekly_digest", mail);
    await insertAuditEntry(tx, {
      facilityId: facility.id,
      userId: null,
      action: WEEKLY_DIGEST_ACTION,
      targetType: "facility",
      targetId: facility.id,
      details: { week, delivery: sent!.delivery, recipients: people.length, ...digest.counts },
    });
    return { ...base, outcome: "sent" as const, recipients: people.length };
  });
}

/** The scheduled job: every facility's summary; one facility's failure does not stop the others. */
export async function sendWeeklyDigests(
  db: Db,
  { now = new Date() }: { now?: Date } = {},
): Promise<WeeklyDigestRun[]> {
  return forEachFacility(
    db,
    "weekly-digest",
    (facility) => sendFacilityWeeklyDigest(db, facility, now),
    (facility) => ({
      facilityId: facility.id,
      facilityName: facility.name,
      week: isoWeek(now),
      outcome: "failed",
      recipients: 0,
    }),
  );
}
