/**
 * Invitations and reminder digests over a real SMTP conversation: a local
 * smtp-server on a random port receives what the mailer sends. The environment
 * (SMTP_URL) is set before anything reads it; getEnv() caches on first use.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq } from "drizzle-orm";
import { closeDb, getDb } from "@/server/db/client";
import { auditLog, facilities, invitations, measurements, stacks, users } from "@/server/db/schema";
import { AppError } from "@/server/http/errors";
import { closeMailer } from "@/server/mail/mailer";
import { acceptInvitation, getInvitation, inviteUser, listInvitations } from "@/server/services/invitations";
import { sendFacilityReminder, sendReminderDigests } from "@/server/services/reminders";
import { verifyCredentials } from "@/server/services/sign-in";
import { sendReminders } from "@/worker/handlers/send-reminders";
import { makeFacility, type TestFacility } from "./helpers";
import { startSmtpCapture, type ReceivedMail, type SmtpCapture } from "./smtp-capture";

let capture: SmtpCapture;
let received: ReceivedMail[] = [];
let waitForMail: SmtpCapture["waitForMail"];

function linkIn(mail: ReceivedMail): string {
  const m = /https?:\/\/\S+\/invite\/[A-Za-z0-9_-]+/.exec(mail.body);
  if (!m) throw new Error("no invitation link in the mail");
  return m[0];
}

async function codeOf(fn: () => Promise<unknown>): Promise<string> {
  try {
    await fn();
    return "ok";
  } catch (err) {
    if (err instanceof AppError) return `${err.status} ${err.code}`;
    throw err;
  }
}

let a: TestFacility;
let b: TestFacility;
let staffEmailA: string;

beforeAll(async () => {
  capture = await startSmtpCapture();
  received = capture.received;
  waitForMail = capture.waitForMail;
  process.env.MAIL_FROM = "Test facility bench <bench@test.example>";
  process.env.APP_URL = "http://localhost:3999";

  a = await makeFacility("mail-a");
  b = await makeFacility("mail-b");
  staffEmailA = (
    await getDb().select({ email: users.email }).from(users).where(eq(users.id, a.actors.staff.userId))
  )[0]!.email;
});

afterAll(async () => {
  closeMailer();
  await capture.close();
  await closeDb();
});

describe("invitations", () => {
  it("mails a working link, and accepting it creates an account that can sign in", async () => {
    const email = `new-person-${Date.now()}@test.example`;
    const { invitation, delivery } = await inviteUser(getDb(), a.actors.admin, {
      email: email.toUpperCase(),
      role: "researcher",
    });
    expect(delivery).toBe("smtp");
    expect(invitation.email).toBe(email);

    const mail = await waitForMail((m) => m.to.includes(email));
    expect(mail.from).toBe("bench@test.example");
    expect(mail.raw).toMatch(/^Subject: Invitation to Test facility mail-a-/m);
    const link = linkIn(mail);
    expect(link.startsWith("http://localhost:3999/invite/")).toBe(true);
    const token = link.split("/invite/")[1]!;

    // Only the SHA-256 of the token is stored.
    const [row] = await getDb().select().from(invitations).where(eq(invitations.id, invitation.id));
    expect(row!.tokenHash).toMatch(/^[0-9a-f]{64}$/);
    expect(row!.tokenHash).not.toContain(token);
    // Source: common practice — invitation links valid for 7 days.
    expect(row!.expiresAt.getTime() - row!.createdAt.getTime()).toBeCloseToAbs(7 * 86_400_000, 5000);

    const preview = await getInvitation(getDb(), token);
    expect(preview).toMatchObject({ email, role: "researcher", hasAccount: false });
    expect((await listInvitations(getDb(), a.actors.admin)).map((i) => i.email)).toContain(email);

    const password = "a long enough passphrase";
    const accepted = await acceptInvitation(getDb(), { token, name: "Invented Person", password });
    expect(accepted).toMatchObject({ email, facilityId: a.facilityId, createdAccount: true });

    const signIn = await verifyCredentials(getDb(), email, password);
    expect(signIn.ok).toBe(true);
    // Used once: the link no longer works and the invitation leaves the pending list.
    expect(await codeOf(() => getInvitation(getDb(), token))).toBe("422 unprocessable");
    expect(await codeOf(() => acceptInvitation(getDb(), { token, name: "X", password }))).toBe(
      "422 unprocessable",
    );
    expect((await listInvitations(getDb(), a.actors.admin)).map((i) => i.email)).not.toContain(email);
    const audit = await getDb()
      .select({ action: auditLog.action })
      .from(auditLog)
      .where(and(eq(auditLog.targetId, invitation.id)));
    expect(audit.map((r) => r.action).sort()).toEqual(["invitation.accept", "invitation.create"]);
  });

  it("refuses a weak password and keeps the invitation usable", async () => {
    const email = `weak-${Date.now()}@test.example`;
    await inviteUser(getDb(), a.actors.admin, { email, role: "staff" });
    const token = linkIn(await waitForMail((m) => m.to.includes(email))).split("/invite/")[1]!;
    // Source: NIST SP 800-63B §5.1.1.2 via checkPasswordPolicy — we ask at least 12 characters.
    expect(await codeOf(() => acceptInvitation(getDb(), { token, name: "Weak Pw", password: "short" }))).toBe(
      "422 unprocessable",
    );
    expect(
      await codeOf(() => acceptInvitation(getDb(), { token, name: "", password: "long enough pass" })),
    ).toBe("422 unprocessable");
    const [u] = await getDb().select().from(users).where(eq(users.email, email));
    expect(u).toBeUndefined();
    expect((await getInvitation(getDb(), token)).email).toBe(email);
  });

  it("lets only admins invite (403 for everyone else)", async () => {
    for (const role of ["staff", "researcher", "engineer"] as const) {
      expect(
        await codeOf(() =>
          inviteUser(getDb(), a.actors[role], { email: `x-${role}@test.example`, role: "staff" }),
        ),
      ).toBe("403 forbidden");
    }
  });

  it("answers 409 for an existing member and 404 for an unknown token", async () => {
    expect(
      await codeOf(() => inviteUser(getDb(), a.actors.admin, { email: staffEmailA, role: "admin" })),
    ).toBe("409 conflict");
    expect(await codeOf(() => getInvitation(getDb(), "A".repeat(43)))).toBe("404 not_found");
    expect(await codeOf(() => getInvitation(getDb(), "../../etc"))).toBe("404 not_found");
  });

  it("replaces a pending invitation when the same address is invited again", async () => {
    const email = `twice-${Date.now()}@test.example`;
    await inviteUser(getDb(), a.actors.admin, { email, role: "staff" });
    const first = linkIn(await waitForMail((m) => m.to.includes(email))).split("/invite/")[1]!;
    received.splice(0, received.length);
    await inviteUser(getDb(), a.actors.admin, { email, role: "engineer" });
    const second = linkIn(await waitForMail((m) => m.to.includes(email))).split("/invite/")[1]!;
    expect(second).not.toBe(first);
    expect(await codeOf(() => getInvitation(getDb(), first))).toBe("404 not_found");
    expect((await getInvitation(getDb(), second)).role).toBe("engineer");
    const pending = (await listInvitations(getDb(), a.actors.admin)).filter((i) => i.email === email);
    expect(pending).toHaveLength(1);
  });

  it("refuses an expired invitation with a clear message", async () => {
    const email = `late-${Date.now()}@test.example`;
    const longAgo = new Date(Date.now() - 8 * 86_400_000);
    await inviteUser(getDb(), a.actors.admin, { email, role: "staff" }, longAgo);
    const token = linkIn(await waitForMail((m) => m.to.includes(email))).split("/invite/")[1]!;
    const err = await getInvitation(getDb(), token).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(AppError);
    expect((err as AppError).status).toBe(422);
    expect((err as AppError).message).toMatch(/expired/);
  });

  it("adds a membership to an existing account without changing its password", async () => {
    const [other] = await getDb().select().from(users).where(eq(users.id, b.actors.researcher.userId));
    await inviteUser(getDb(), a.actors.admin, { email: other!.email, role: "staff" });
    const mail = await waitForMail((m) => m.to.includes(other!.email));
    const token = linkIn(mail).split("/invite/")[1]!;
    expect((await getInvitation(getDb(), token)).hasAccount).toBe(true);
    expect(mail.body).toContain("You already have an account");
    const r = await acceptInvitation(getDb(), { token, password: "ignored for existing accounts" });
    expect(r).toMatchObject({ userId: other!.id, createdAccount: false });
    const [after] = await getDb().select().from(users).where(eq(users.id, other!.id));
    expect(after!.passwordHash).toBe(other!.passwordHash);
    expect((await verifyCredentials(getDb(), other!.email, b.passwords.researcher)).ok).toBe(true);
  });
});

describe("reminder digests", () => {
  async function addCheck(f: TestFacility, objectiveId: string, daysAgo: number) {
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
    await db.insert(measurements).values({
      facilityId: f.facilityId,
      stackId: stack!.id,
      objectiveId,
      purpose: "routine",
      status: "done",
      modality: "confocal",
      parameters: {},
      summary: { ratios: { lateral: 1.1, axial: 1.2 } },
      acquiredAt: new Date(Date.now() - daysAgo * 86_400_000),
    });
  }

  it("mails admins and staff one digest listing an overdue objective, and not twice the same day", async () => {
    const d = await makeFacility("mail-d");
    const emailOf = async (id: string) =>
      (await getDb().select({ email: users.email }).from(users).where(eq(users.id, id)))[0]!.email;
    const adminEmail = await emailOf(d.actors.admin.userId);
    const staffEmail = await emailOf(d.actors.staff.userId);
    await addCheck(d, d.objectiveIds[0], 40); // interval 30 days → 10 days overdue; the second objective has no check
    const [facility] = await getDb().select().from(facilities).where(eq(facilities.id, d.facilityId));
    received.splice(0, received.length);
    const now = new Date();

    const first = await sendFacilityReminder(getDb(), facility!, now);
    expect(first).toMatchObject({ outcome: "sent", recipients: 2, items: 2 });
    const mail = await waitForMail((m) => m.to.includes(adminEmail));
    // One message per person (each carries its own unsubscribe link).
    await waitForMail((m) => m.to.includes(staffEmail));
    expect(mail.to).toEqual([adminEmail]);
    expect(mail.body).toMatch(/Overdue:/);
    expect(mail.body).toContain("63× / 1.40 oil on Scope A");
    expect(mail.body).toContain("overdue by 10 days");
    expect(mail.body).toMatch(/No check recorded yet/);
    expect(mail.body).toContain("http://localhost:3999/dashboard");

    const again = await sendFacilityReminder(getDb(), facility!, now);
    expect(again.outcome).toBe("already_sent");
    const all = await sendReminderDigests(getDb(), { now });
    expect(all.find((r) => r.facilityId === d.facilityId)?.outcome).toBe("already_sent");
    await new Promise((r) => setTimeout(r, 200));
    expect(received.filter((m) => m.to.includes(adminEmail))).toHaveLength(1);

    const logged = await getDb()
      .select()
      .from(auditLog)
      .where(and(eq(auditLog.facilityId, d.facilityId), eq(auditLog.action, "reminder.sent")));
    expect(logged).toHaveLength(1);
  });

  it("lets the scheduled job's handler drop a malformed payload without throwing", async () => {
    await expect(sendReminders({ now: "not a date" })).resolves.toEqual([]);
    await expect(sendReminders("nonsense")).resolves.toEqual([]);
  });

  it("skips a facility with nothing due", async () => {
    const c = await makeFacility("mail-c");
    await addCheck(c, c.objectiveIds[0], 2);
    await addCheck(c, c.objectiveIds[1], 3);
    const [facility] = await getDb().select().from(facilities).where(eq(facilities.id, c.facilityId));
    const r = await sendFacilityReminder(getDb(), facility!);
    expect(r).toMatchObject({ outcome: "nothing_due", recipients: 0 });
  });
});
