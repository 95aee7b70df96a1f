/**
 * Per-person unsubscribe (signed links and the settings choice), the weekly summary
 * for admins, and planning a service visit for an engineer known only by e-mail —
 * over a real SMTP conversation (startSmtpCapture sets SMTP_URL before anything
 * reads the environment). All people, facilities and checks are invented.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq } from "drizzle-orm";
import { closeDb, getDb } from "@/server/db/client";
import { auditLog, facilities, measurements, serviceVisits, stacks, users } from "@/server/db/schema";
import { listAssignedInstrumentIds } from "@/server/db/queries/service-visits";
import { AppError } from "@/server/http/errors";
import { closeMailer } from "@/server/mail/mailer";
import { sendOutOfSpecAlert } from "@/server/services/alerts";
import { acceptInvitation } from "@/server/services/invitations";
import { listInstruments } from "@/server/services/instruments";
import {
  applyUnsubscribeToken,
  getMailPreferences,
  setMailPreferences,
  unsubscribeToken,
  verifyUnsubscribeToken,
} from "@/server/services/mail-preferences";
import { sendFacilityReminder } from "@/server/services/reminders";
import { createServiceVisit, listServiceVisits } from "@/server/services/service-visits";
import { sendFacilityWeeklyDigest } from "@/server/services/weekly-digest";
import { sendWeeklyDigest } from "@/worker/handlers/weekly-digest";
import type { Actor } from "@/server/auth/permissions";
import { makeFacility, type TestFacility } from "./helpers";
import { startSmtpCapture, type ReceivedMail, type SmtpCapture } from "./smtp-capture";

const APP = "http://localhost:3996";
const DAY = 86_400_000;
let capture: SmtpCapture;
let received: ReceivedMail[];

async function codeOf(fn: () => Promise<unknown>): Promise<string> {
  try {
    await fn();
    return "ok";
  } catch (err) {
    if (err instanceof AppError) return `${err.status} ${err.code}`;
    throw err;
  }
}

async function emailOf(id: string): Promise<string> {
  return (await getDb().select({ email: users.email }).from(users).where(eq(users.id, id)))[0]!.email;
}

async function facilityRow(f: TestFacility) {
  return (await getDb().select().from(facilities).where(eq(facilities.id, f.facilityId)))[0]!;
}

/** A finished check inserted directly (invented numbers), `daysAgo` before now. */
async function addCheck(
  f: TestFacility,
  objectiveId: string,
  daysAgo: number,
  level: "pass" | "fail" = "pass",
): Promise<string> {
  const db = getDb();
  const [stack] = await db
    .insert(stacks)
    .values({
      facilityId: f.facilityId,
      fileName: "invented-beads.tif",
      storageKey: `test/${crypto.randomUUID()}`,
      sha256: crypto.randomUUID().replace(/-/g, ""),
      sizeBytes: 1024,
      width: 64,
      height: 64,
      slices: 32,
      dtype: "uint16",
    })
    .returning();
  const ratios = level === "fail" ? { lateral: 2.0, axial: 2.1 } : { lateral: 1.1, axial: 1.2 };
  const [m] = await db
    .insert(measurements)
    .values({
      facilityId: f.facilityId,
      stackId: stack!.id,
      objectiveId,
      purpose: "routine",
      status: "done",
      modality: "confocal",
      parameters: {},
      summary: {
        ratios,
        verdict: {
          level,
          headline: level === "fail" ? "Out of spec: the lens is blurred." : "Within limits.",
          evidence: [],
        },
      },
      acquiredAt: new Date(Date.now() - daysAgo * DAY),
    })
    .returning();
  return m!.id;
}

function unsubscribeLinkIn(mail: ReceivedMail): string {
  const m = /https?:\/\/\S+\/unsubscribe\/[A-Za-z0-9._-]+/.exec(mail.body);
  if (!m) throw new Error("no unsubscribe link in the mail");
  return m[0];
}

/** One header's value, unfolded (nodemailer folds long headers). */
function header(mail: ReceivedMail, name: string): string | null {
  const head = mail.raw.split(/\r?\n\r?\n/)[0]!.replace(/\r?\n[ \t]+/g, " ");
  const line = head.split(/\r?\n/).find((l) => l.toLowerCase().startsWith(`${name.toLowerCase()}:`));
  return line ? line.slice(name.length + 1).trim() : null;
}

function settle(ms = 200) {
  return new Promise((r) => setTimeout(r, ms));
}

beforeAll(async () => {
  capture = await startSmtpCapture();
  received = capture.received;
  process.env.MAIL_FROM = "Test facility bench <bench@test.example>";
  process.env.APP_URL = APP;
});

afterAll(async () => {
  closeMailer();
  await capture.close();
  await closeDb();
});

describe("unsubscribe links", () => {
  let f: TestFacility;
  let adminEmail: string;
  let staffEmail: string;

  beforeAll(async () => {
    f = await makeFacility("unsub");
    adminEmail = await emailOf(f.actors.admin.userId);
    staffEmail = await emailOf(f.actors.staff.userId);
    await addCheck(f, f.objectiveIds[0], 40); // 10 days overdue: a reminder is due
  });

  it("stops that kind of mail only, for that person only", async () => {
    received.splice(0, received.length);
    const facility = await facilityRow(f);
    const day1 = new Date();
    expect((await sendFacilityReminder(getDb(), facility, day1)).outcome).toBe("sent");
    const staffMail = await capture.waitForMail((m) => m.to.includes(staffEmail));
    await capture.waitForMail((m) => m.to.includes(adminEmail));
    // Each person gets their own message with their own link, also as a List-Unsubscribe header.
    expect(staffMail.to).toEqual([staffEmail]);
    const link = unsubscribeLinkIn(staffMail);
    expect(link.startsWith(`${APP}/unsubscribe/`)).toBe(true);
    const token = link.split("/unsubscribe/")[1]!;
    // Source: RFC 2369 §3.2 — List-Unsubscribe carries the URL in angle brackets.
    expect(header(staffMail, "List-Unsubscribe")).toBe(`<${link}>`);
    expect(verifyUnsubscribeToken(token)).toEqual({
      userId: f.actors.staff.userId,
      facilityId: f.facilityId,
      kind: "reminders",
    });

    const done = await applyUnsubscribeToken(getDb(), token);
    expect(done).toMatchObject({ kind: "reminders", on: false });
    expect(await getMailPreferences(getDb(), f.actors.staff)).toEqual({
      reminders: false,
      alerts: true,
      weeklyDigest: true,
    });
    // Opening the link again changes nothing.
    await applyUnsubscribeToken(getDb(), token);

    // Next day's reminder: the admin still gets it, the staff member does not.
    received.splice(0, received.length);
    const day2 = new Date(day1.getTime() + DAY);
    expect(await sendFacilityReminder(getDb(), facility, day2)).toMatchObject({
      outcome: "sent",
      recipients: 1,
    });
    await capture.waitForMail((m) => m.to.includes(adminEmail));
    await settle();
    expect(received.flatMap((m) => m.to)).toEqual([adminEmail]);

    // Alerts are another kind: the staff member still gets them.
    received.splice(0, received.length);
    const failing = await addCheck(f, f.objectiveIds[1], 0, "fail");
    expect(await sendOutOfSpecAlert(getDb(), failing)).toBe("sent");
    const alert = await capture.waitForMail((m) => m.to.includes(staffEmail));
    expect(alert.body).toMatch(/is out of spec/);
    expect(unsubscribeLinkIn(alert)).toContain(".alerts.");
    await capture.waitForMail((m) => m.to.includes(adminEmail));

    // Undo switches reminders back on.
    expect((await applyUnsubscribeToken(getDb(), token, { subscribe: true })).on).toBe(true);
    expect((await getMailPreferences(getDb(), f.actors.staff)).reminders).toBe(true);
    const audit = await getDb()
      .select({ details: auditLog.details })
      .from(auditLog)
      .where(and(eq(auditLog.facilityId, f.facilityId), eq(auditLog.action, "mail_preferences.update")));
    expect(audit).toHaveLength(2);
  });

  it("refuses a forged or altered token and changes nothing", async () => {
    const real = unsubscribeToken(f.actors.staff.userId, f.facilityId, "alerts");
    const [userId, facilityId, , sig] = real.split(".");
    const forged = [
      `${userId}.${facilityId}.alerts.${"A".repeat(43)}`, // made-up signature
      `${f.actors.admin.userId}.${facilityId}.alerts.${sig}`, // someone else's id, staff's signature
      `${userId}.${facilityId}.reminders.${sig}`, // another kind
      `${userId}.${facilityId}.alerts`, // no signature
      "../../etc/passwd",
    ];
    for (const t of forged) {
      expect(verifyUnsubscribeToken(t)).toBeNull();
      expect(await codeOf(() => applyUnsubscribeToken(getDb(), t))).toBe("404 not_found");
    }
    expect((await getMailPreferences(getDb(), f.actors.admin)).alerts).toBe(true);
    expect((await getMailPreferences(getDb(), f.actors.staff)).alerts).toBe(true);
    // A valid token of a facility the person is not a member of is "not found".
    const other = await makeFacility("unsub-other");
    const outsider = unsubscribeToken(f.actors.staff.userId, other.facilityId, "alerts");
    expect(await codeOf(() => applyUnsubscribeToken(getDb(), outsider))).toBe("404 not_found");
  });

  it("lets admins and staff choose in Settings, and the alert leaves them out", async () => {
    await setMailPreferences(getDb(), f.actors.admin, { reminders: true, alerts: false, weeklyDigest: true });
    expect(await getMailPreferences(getDb(), f.actors.admin)).toEqual({
      reminders: true,
      alerts: false,
      weeklyDigest: true,
    });
    expect(
      await codeOf(() =>
        setMailPreferences(getDb(), f.actors.researcher, {
          reminders: false,
          alerts: false,
          weeklyDigest: false,
        }),
      ),
    ).toBe("403 forbidden");
    received.splice(0, received.length);
    const failing = await addCheck(f, f.objectiveIds[0], 0, "fail");
    expect(await sendOutOfSpecAlert(getDb(), failing)).toBe("sent");
    await capture.waitForMail((m) => m.to.includes(staffEmail));
    await settle();
    expect(received.flatMap((m) => m.to)).toEqual([staffEmail]);
    await setMailPreferences(getDb(), f.actors.admin, { reminders: true, alerts: true, weeklyDigest: true });
  });
});

describe("weekly digest", () => {
  it("reaches admins only, once per ISO week, and lists a failed check", async () => {
    const w = await makeFacility("weekly");
    const adminEmail = await emailOf(w.actors.admin.userId);
    await addCheck(w, w.objectiveIds[0], 10); // before the window: in spec then
    await addCheck(w, w.objectiveIds[0], 2, "fail");
    await addCheck(w, w.objectiveIds[1], 3, "pass");
    const facility = await facilityRow(w);
    const now = new Date();
    received.splice(0, received.length);

    const first = await sendFacilityWeeklyDigest(getDb(), facility, now);
    expect(first).toMatchObject({ outcome: "sent", recipients: 1 });
    const mail = await capture.waitForMail((m) => m.to.includes(adminEmail));
    await settle();
    // Only the admin: staff, researcher and engineer get no weekly summary.
    expect(received.flatMap((m) => m.to)).toEqual([adminEmail]);
    expect(mail.raw).toMatch(/^Subject: Week \d{4}-W\d{2} at Test facility weekly-/m);
    expect(mail.body).toContain("63× / 1.40 oil on Scope A");
    expect(mail.body).toMatch(/\(routine\): FAIL \(out of spec\)/);
    expect(mail.body).toMatch(/in spec → out of spec/);
    expect(mail.body).toMatch(/Out of spec now:/);
    expect(unsubscribeLinkIn(mail)).toContain(".weekly_digest.");
    expect(header(mail, "List-Unsubscribe")).toBe(`<${unsubscribeLinkIn(mail)}>`);

    // Later the same ISO week: nothing more, also through the job's handler.
    const sameWeek = new Date(now.getTime() + 60_000);
    expect((await sendFacilityWeeklyDigest(getDb(), facility, sameWeek)).outcome).toBe("already_sent");
    await settle();
    expect(received).toHaveLength(1);
    const rows = await getDb()
      .select({ details: auditLog.details })
      .from(auditLog)
      .where(and(eq(auditLog.facilityId, w.facilityId), eq(auditLog.action, "weekly_digest.sent")));
    expect(rows).toHaveLength(1);
    expect(rows[0]!.details).toMatchObject({ recipients: 1, fail: 1, delivery: "smtp" });

    // The next week it is sent again.
    const nextWeek = new Date(now.getTime() + 7 * DAY);
    expect((await sendFacilityWeeklyDigest(getDb(), facility, nextWeek)).outcome).toBe("sent");

    // An admin who switched it off is left out.
    await setMailPreferences(getDb(), w.actors.admin, { reminders: true, alerts: true, weeklyDigest: false });
    const weekAfter = new Date(now.getTime() + 14 * DAY);
    expect((await sendFacilityWeeklyDigest(getDb(), facility, weekAfter)).outcome).toBe("no_recipients");
  });

  it("drops a malformed job payload without throwing", async () => {
    await expect(sendWeeklyDigest({ now: "not a date" })).resolves.toEqual([]);
  });
});

describe("service visit for an engineer known by e-mail", () => {
  it("invites a new engineer, whose acceptance gives access to exactly the visit's instruments in its window", async () => {
    const v = await makeFacility("visit-invite");
    const email = `field-engineer-${Date.now()}@service.example`;
    received.splice(0, received.length);
    const start = new Date(Date.now() - DAY);
    const end = new Date(Date.now() + 2 * DAY);
    const visit = await createServiceVisit(getDb(), v.actors.admin, {
      title: "Laser alignment, Scope B",
      engineerEmail: email,
      instrumentIds: [v.instrumentIds[1]],
      startsAt: start.toISOString(),
      endsAt: end.toISOString(),
    });
    expect(visit.engineerNotice).toBe("invited");
    expect(visit.engineerId).toBeNull();
    expect(visit.engineerEmail).toBe(email);

    const invitation = await capture.waitForMail((m) => m.to.includes(email));
    expect(invitation.body).toContain("as a service engineer");
    const token = /\/invite\/([A-Za-z0-9_-]+)/.exec(invitation.body)![1]!;
    const accepted = await acceptInvitation(getDb(), {
      token,
      name: "Invented Field Engineer",
      password: "a long enough passphrase",
    });
    const [row] = await getDb().select().from(serviceVisits).where(eq(serviceVisits.id, visit.id));
    expect(row!.engineerId).toBe(accepted.userId);
    expect(row!.engineerEmail).toBeNull();

    const engineer: Actor = {
      userId: accepted.userId,
      facilityId: v.facilityId,
      role: "engineer",
      via: "session",
    };
    // Now, inside the window: Scope B only (not Scope A, which is on another engineer's visit).
    expect((await listInstruments(getDb(), engineer)).map((i) => i.id)).toEqual([v.instrumentIds[1]]);
    expect((await listServiceVisits(getDb(), engineer)).map((x) => x.id)).toEqual([visit.id]);
    // Outside the window: nothing.
    const q = { facilityId: v.facilityId, engineerId: accepted.userId };
    expect(
      await listAssignedInstrumentIds(getDb(), { ...q, at: new Date(start.getTime() - 60_000) }),
    ).toEqual([]);
    expect(await listAssignedInstrumentIds(getDb(), { ...q, at: new Date(end.getTime() + 60_000) })).toEqual(
      [],
    );
  });

  it("mails an engineer who is already a member the visit, and lets only admins invite", async () => {
    const v = await makeFacility("visit-member");
    const engineerEmail = await emailOf(v.actors.engineer.userId);
    received.splice(0, received.length);
    const visit = await createServiceVisit(getDb(), v.actors.staff, {
      title: "Annual maintenance",
      engineerEmail: engineerEmail.toUpperCase(),
      instrumentIds: [v.instrumentIds[0], v.instrumentIds[1]],
      startsAt: "2026-12-14",
      endsAt: "2026-12-15",
    });
    expect(visit.engineerNotice).toBe("mailed");
    expect(visit.engineerId).toBe(v.actors.engineer.userId);
    const mail = await capture.waitForMail((m) => m.to.includes(engineerEmail));
    expect(mail.body).toContain("2026-12-14 to 2026-12-15");
    expect(mail.body).toContain(`${APP}/service-visits/${visit.id}`);
    expect(mail.body).toMatch(/Scope A visit-member-/);
    expect(mail.body).toMatch(/Scope B visit-member-/);

    // Staff may plan visits but not invite new people.
    expect(
      await codeOf(() =>
        createServiceVisit(getDb(), v.actors.staff, {
          title: "Someone new",
          engineerEmail: "unknown-engineer@service.example",
          instrumentIds: [v.instrumentIds[0]],
          startsAt: "2026-12-14",
          endsAt: "2026-12-15",
        }),
      ),
    ).toBe("403 forbidden");
  });
});
