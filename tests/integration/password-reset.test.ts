/**
 * "Forgot your password?" end to end over a real SMTP conversation: a local
 * smtp-server on a random port receives the link; the link sets a new password
 * once, within the hour, within the password policy, and lifts a lock-out.
 * SMTP_URL is set before anything calls getEnv() (it caches on first use).
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq } from "drizzle-orm";
import { closeDb, getDb } from "@/server/db/client";
import { auditLog, passwordResets, users } from "@/server/db/schema";
import { AppError } from "@/server/http/errors";
import { closeMailer } from "@/server/mail/mailer";
import { getPasswordReset, requestPasswordReset, resetPassword } from "@/server/services/password-reset";
import { verifyCredentials } from "@/server/services/sign-in";
import { makeFacility, type TestFacility } from "./helpers";
import { startSmtpCapture, type ReceivedMail, type SmtpCapture } from "./smtp-capture";

let capture: SmtpCapture;
let received: ReceivedMail[] = [];
let waitForMail: SmtpCapture["waitForMail"];
let f: TestFacility;
let email: string;

/** Ask for a link and return the token of the mail that arrives. */
async function requestToken(address: string, now?: Date): Promise<string> {
  received.splice(0, received.length);
  await requestPasswordReset(getDb(), address, now);
  const mail = await waitForMail((m) => m.to.includes(address.toLowerCase()));
  const m = /https?:\/\/\S+\/reset-password\/([A-Za-z0-9_-]+)/.exec(mail.body);
  if (!m) throw new Error("no reset link in the mail");
  expect(m[0].startsWith("http://localhost:3998/reset-password/")).toBe(true);
  return m[1]!;
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

beforeAll(async () => {
  capture = await startSmtpCapture();
  received = capture.received;
  waitForMail = capture.waitForMail;
  process.env.APP_URL = "http://localhost:3998";
  f = await makeFacility("reset");
  email = (
    await getDb().select({ email: users.email }).from(users).where(eq(users.id, f.actors.staff.userId))
  )[0]!.email;
});

afterAll(async () => {
  closeMailer();
  await capture.close();
  await closeDb();
});

describe("password reset", () => {
  it("mails a one-hour link that sets a new password once and lifts a lock-out", async () => {
    // Lock the account first, as five failed sign-ins would.
    await getDb()
      .update(users)
      .set({ failedSignIns: 5, lockedUntil: new Date(Date.now() + 15 * 60_000) })
      .where(eq(users.id, f.actors.staff.userId));
    expect((await verifyCredentials(getDb(), email, f.passwords.staff)).ok).toBe(false);

    const token = await requestToken(email.toUpperCase());
    const [row] = await getDb()
      .select()
      .from(passwordResets)
      .where(eq(passwordResets.userId, f.actors.staff.userId));
    // Only the SHA-256 of the token is stored.
    expect(row!.tokenHash).toMatch(/^[0-9a-f]{64}$/);
    expect(row!.tokenHash).not.toContain(token);
    // Source: common practice — reset links valid for one hour.
    expect(row!.expiresAt.getTime() - row!.createdAt.getTime()).toBeCloseToAbs(3_600_000, 5000);
    expect(await getPasswordReset(getDb(), token)).toEqual({ email });

    const newPassword = "an invented long passphrase";
    const done = await resetPassword(getDb(), { token, password: newPassword });
    expect(done).toEqual({ userId: f.actors.staff.userId, email });

    const signIn = await verifyCredentials(getDb(), email, newPassword);
    expect(signIn.ok).toBe(true);
    expect((await verifyCredentials(getDb(), email, f.passwords.staff)).ok).toBe(false);
    // Used once: the link no longer works.
    expect(await codeOf(() => getPasswordReset(getDb(), token))).toBe("422 unprocessable");
    expect(
      await codeOf(() => resetPassword(getDb(), { token, password: "yet another long passphrase" })),
    ).toBe("422 unprocessable");
    expect((await verifyCredentials(getDb(), email, newPassword)).ok).toBe(true);

    const audit = await getDb()
      .select({ action: auditLog.action })
      .from(auditLog)
      .where(and(eq(auditLog.facilityId, f.facilityId), eq(auditLog.targetId, f.actors.staff.userId)));
    expect(audit.map((a) => a.action)).toContain("password.reset");
  });

  it("refuses weak passwords and keeps the link usable", async () => {
    const token = await requestToken(email);
    // Source: NIST SP 800-63B §5.1.1.2 via checkPasswordPolicy — at least 12 characters, not one repeated character.
    for (const weak of ["short", "aaaaaaaaaaaaaaaa", "x".repeat(129)]) {
      const err = await resetPassword(getDb(), { token, password: weak }).catch((e: unknown) => e);
      expect(err).toBeInstanceOf(AppError);
      expect((err as AppError).status).toBe(422);
      expect((err as AppError).message).toMatch(/Choose another password/);
    }
    expect(await getPasswordReset(getDb(), token)).toEqual({ email });
  });

  it("refuses an expired link, an unknown one, and one replaced by a newer request", async () => {
    const twoHoursAgo = new Date(Date.now() - 2 * 3_600_000);
    const expired = await requestToken(email, twoHoursAgo);
    const err = await getPasswordReset(getDb(), expired).catch((e: unknown) => e);
    expect((err as AppError).status).toBe(422);
    expect((err as AppError).message).toMatch(/expired/);
    expect(
      await codeOf(() => resetPassword(getDb(), { token: expired, password: "a perfectly fine passphrase" })),
    ).toBe("422 unprocessable");

    const first = await requestToken(email);
    const second = await requestToken(email);
    expect(await codeOf(() => getPasswordReset(getDb(), first))).toBe("404 not_found");
    expect((await getPasswordReset(getDb(), second)).email).toBe(email);
    expect(await codeOf(() => getPasswordReset(getDb(), "A".repeat(43)))).toBe("404 not_found");
    expect(await codeOf(() => getPasswordReset(getDb(), "../../etc/passwd"))).toBe("404 not_found");
  });

  it("answers the same for an unknown address and sends nothing", async () => {
    received.splice(0, received.length);
    const nobody = `nobody-${Date.now()}@test.example`;
    await expect(requestPasswordReset(getDb(), nobody)).resolves.toBeUndefined();
    await new Promise((r) => setTimeout(r, 200));
    expect(received).toHaveLength(0);
  });
});
