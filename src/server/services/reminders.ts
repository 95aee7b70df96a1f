/**
 * Daily reminder digests: per facility, one mail to its admins and staff listing
 * overdue checks, checks due within 7 days and objectives never checked. A
 * facility with nothing to plan gets no mail. Each sent digest is recorded in the
 * audit log (`reminder.sent`, with the facility's calendar day), and a digest
 * already recorded for that day is not sent again — the check, the send and the
 * record happen under one per-facility-and-day lock, inside one transaction, so
 * two workers cannot both send it and a failed send records nothing.
 */
import { and, desc, eq, sql } from "drizzle-orm";
import { checkReminders, type CheckReminders } from "../../lib/qc";
import type { Db } from "../db/client";
import { forEachFacility } from "./for-each-facility";
import { auditLog } from "../db/schema";
import { insertAuditEntry } from "../db/queries/audit";
import { listInstrumentsByFacility, listObjectivesByFacility } from "../db/queries/instruments";
import { requirePermission, type Actor } from "../auth/permissions";
import { listMailRecipients } from "../db/queries/users";
import { reminderDigestMail } from "../mail/templates";
import { sendToEachWithUnsubscribe } from "./mail-preferences";
import { appUrl } from "../../env";
import { getTrends } from "./logbook";

export const REMINDER_ACTION = "reminder.sent";

export type ReminderOutcome = "sent" | "nothing_due" | "already_sent" | "no_recipients" | "failed";

export interface ReminderRun {
  facilityId: string;
  facilityName: string;
  day: string;
  outcome: ReminderOutcome;
  recipients: number;
  items: number;
}

/** The facility's calendar day (YYYY-MM-DD); an unknown time zone falls back to UTC. */
function facilityDay(now: Date, timeZone: string): { day: string; timeZone: string } {
  const fmt = (tz: string) =>
    new Intl.DateTimeFormat("en-CA", {
      timeZone: tz,
      year: "numeric",
      month: "2-digit",
      day: "2-digit",
    }).format(now);
  try {
    return { day: fmt(timeZone), timeZone };
  } catch {
    return { day: fmt("UTC"), timeZone: "UTC" };
  }
}

/** The reminders of one facility right now (active objectives only). */
export async function buildFacilityReminders(
  db: Db,
  facilityId: string,
  now = new Date(),
  timeZone = "UTC",
): Promise<CheckReminders> {
  const [objs, instruments] = await Promise.all([
    listObjectivesByFacility(db, { facilityId }),
    listInstrumentsByFacility(db, { facilityId }),
  ]);
  const active = objs.filter((o) => !o.retired);
  const trends = await getTrends(db, active, now);
  const instrumentName = new Map(instruments.map((i) => [i.id, i.name]));
  return checkReminders(
    active.map((o) => {
      const points = trends.get(o.id)?.points ?? [];
      const last = points[points.length - 1];
      return {
        id: o.id,
        name: o.name,
        instrumentName: o.instrumentId ? (instrumentName.get(o.instrumentId) ?? null) : null,
        checkIntervalDays: o.checkIntervalDays,
        lastCheckAt: last ? new Date(last.acquiredAt) : null,
      };
    }),
    { now, timeZone },
  );
}

/** Build and send one facility's digest for `now`'s day, unless nothing is due or it was already sent. */
export async function sendFacilityReminder(
  db: Db,
  facility: { id: string; name: string; timezone: string },
  now = new Date(),
): Promise<ReminderRun> {
  const { day, timeZone } = facilityDay(now, facility.timezone);
  const base = { facilityId: facility.id, facilityName: facility.name, day };
  const reminders = await buildFacilityReminders(db, facility.id, now, timeZone);
  if (reminders.total === 0) return { ...base, outcome: "nothing_due", recipients: 0, items: 0 };

  return db.transaction(async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(hashtext(${`reminder:${facility.id}:${day}`}))`);
    const [already] = await tx
      .select({ id: auditLog.id })
      .from(auditLog)
      .where(
        and(
          eq(auditLog.facilityId, facility.id),
          eq(auditLog.action, REMINDER_ACTION),
          sql`${auditLog.details}->>'day' = ${day}`,
        ),
      )
      .limit(1);
    if (already) return { ...base, outcome: "already_sent" as const, recipients: 0, items: reminders.total };
    // People who switched reminders off (Settings or the mail's link) are left out.
    const people = await listMailRecipients(tx, {
      facilityId: facility.id,
      roles: ["admin", "staff"],
      kind: "reminders",
    });
    const to = people.map((p) => p.email);
    if (to.length === 0)
      return { ...base, outcome: "no_recipients" as const, recipients: 0, items: reminders.total };
    const mail = reminderDigestMail({
      facilityName: facility.name,
      reminders,
      dashboardUrl: appUrl(`/dashboard`),
      day,
    });
    const sent = await sendToEachWithUnsubscribe(people, facility.id, "reminders", mail);
    await insertAuditEntry(tx, {
      facilityId: facility.id,
      userId: null,
      action: REMINDER_ACTION,
      targetType: "facility",
      targetId: facility.id,
      details: {
        day,
        delivery: sent!.delivery,
        recipients: to.length,
        overdue: reminders.overdue.length,
        dueSoon: reminders.dueSoon.length,
        neverChecked: reminders.neverChecked.length,
      },
    });
    return { ...base, outcome: "sent" as const, recipients: to.length, items: reminders.total };
  });
}

/**
 * The scheduled job: every facility's digest. One facility's failure (e.g. the
 * mail server refusing a message) is reported and the others still get theirs.
 */
export async function sendReminderDigests(
  db: Db,
  { now = new Date() }: { now?: Date } = {},
): Promise<ReminderRun[]> {
  return forEachFacility(
    db,
    "reminders",
    (facility) => sendFacilityReminder(db, facility, now),
    (facility) => ({
      facilityId: facility.id,
      facilityName: facility.name,
      day: facilityDay(now, facility.timezone).day,
      outcome: "failed",
      recipients: 0,
      items: 0,
    }),
  );
}

/** For the settings page: the latest digest sent to the actor's facility. */
export async function getLastReminder(
  db: Db,
  actor: Actor,
): Promise<{ sentAt: Date; day: string | null; recipients: number | null; delivery: string | null } | null> {
  requirePermission(actor, "settings.open");
  const [row] = await db
    .select({ createdAt: auditLog.createdAt, details: auditLog.details })
    .from(auditLog)
    .where(and(eq(auditLog.facilityId, actor.facilityId), eq(auditLog.action, REMINDER_ACTION)))
    .orderBy(desc(auditLog.createdAt))
    .limit(1);
  if (!row) return null;
  const d = (row.details ?? {}) as { day?: string; recipients?: number; delivery?: string };
  return {
    sentAt: row.createdAt,
    day: d.day ?? null,
    recipients: d.recipients ?? null,
    delivery: d.delivery ?? null,
  };
}
