/**
 * Password sign-in with a lock-out: after LOCK_AFTER consecutive failures the
 * account is locked for LOCK_MINUTES. Passwords are compared with bcrypt and are
 * never logged or returned.
 */
import bcrypt from "bcryptjs";
import type { Db } from "../db/client";
import {
  getUserByEmail,
  listMembershipsByUser,
  recordFailedSignIn,
  recordSuccessfulSignIn,
} from "../db/queries/users";

export const LOCK_AFTER = 5;
export const LOCK_MINUTES = 15;

export type SignInFailure = "unknown_email" | "wrong_password" | "locked" | "no_facility";

export type SignInResult =
  | { ok: true; user: { id: string; email: string; name: string } }
  | { ok: false; reason: SignInFailure; minutesLeft?: number };

export async function verifyCredentials(db: Db, email: string, password: string): Promise<SignInResult> {
  const user = await getUserByEmail(db, { email });
  if (!user || !user.passwordHash) return { ok: false, reason: "unknown_email" };
  if (user.lockedUntil && user.lockedUntil.getTime() > Date.now()) {
    return {
      ok: false,
      reason: "locked",
      minutesLeft: Math.ceil((user.lockedUntil.getTime() - Date.now()) / 60000),
    };
  }
  const matches = await bcrypt.compare(password, user.passwordHash);
  if (!matches) {
    await recordFailedSignIn(db, { userId: user.id, lockAfter: LOCK_AFTER, lockMinutes: LOCK_MINUTES });
    return { ok: false, reason: "wrong_password" };
  }
  const memberships = await listMembershipsByUser(db, { userId: user.id });
  if (memberships.length === 0) return { ok: false, reason: "no_facility" };
  await recordSuccessfulSignIn(db, { userId: user.id });
  return { ok: true, user: { id: user.id, email: user.email, name: user.name } };
}

/** The password policy for new passwords (NIST SP 800-63B: length over composition rules). */
export function checkPasswordPolicy(password: string): string | null {
  if (password.length < 12) return "Use at least 12 characters.";
  if (password.length > 128) return "Use at most 128 characters.";
  if (/^(.)\1+$/.test(password)) return "A password of one repeated character is too easy to guess.";
  return null;
}

export async function hashPassword(password: string): Promise<string> {
  return bcrypt.hash(password, 12);
}
