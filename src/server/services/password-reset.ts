/**
 * "Forgot your password?": a one-time link by e-mail. The link carries 32 random
 * bytes; only their SHA-256 is stored in `password_resets`. A link lasts
 * RESET_MINUTES and works once; asking again deletes the user's unused links, so
 * only the newest works. Asking never says whether the address has an account.
 * Choosing the new password applies the password policy, stores a bcrypt hash and
 * lifts a sign-in lock-out.
 */
import { randomBytes } from "node:crypto";
import { and, eq, isNull, ne, sql } from "drizzle-orm";
import { z } from "zod";
import type { Db, Tx } from "../db/client";
import { memberships, passwordResets, users } from "../db/schema";
import { insertAuditEntry } from "../db/queries/audit";
import { getUserByEmail } from "../db/queries/users";
import { AppError, notFound } from "../http/errors";
import { sendMail } from "../mail/mailer";
import { passwordResetMail } from "../mail/templates";
import { appUrl } from "../../env";
import { hashToken } from "./actor";
import { checkPasswordPolicy, hashPassword } from "./sign-in";

export const RESET_MINUTES = 60;

/** The link's token: 32 random bytes, base64url. */
export const resetTokenSchema = z
  .string()
  .trim()
  .regex(/^[A-Za-z0-9_-]{20,100}$/, "This link is not valid.");

export const requestResetSchema = z.object({
  email: z.string().trim().toLowerCase().max(254).pipe(z.email("Enter a valid e-mail address.")),
});

export const resetPasswordSchema = z.object({
  token: resetTokenSchema,
  password: z.string().max(200),
});

/** The public link of a reset. */
export function passwordResetLink(token: string): string {
  return appUrl(`/reset-password/${token}`);
}

/**
 * Mail a reset link when the address has an account; do nothing otherwise. The
 * caller answers the same in both cases. A mail failure is logged and swallowed
 * for the same reason (the unused link simply expires).
 */
export async function requestPasswordReset(db: Db, rawEmail: string, now = new Date()): Promise<void> {
  const { email } = requestResetSchema.parse({ email: rawEmail });
  const user = await getUserByEmail(db, { email });
  if (!user || !user.passwordHash) return;
  const token = randomBytes(32).toString("base64url");
  await db.transaction(async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(hashtext(${`password-reset:${user.id}`}))`);
    await tx
      .delete(passwordResets)
      .where(and(eq(passwordResets.userId, user.id), isNull(passwordResets.usedAt)));
    await tx.insert(passwordResets).values({
      userId: user.id,
      tokenHash: hashToken(token),
      expiresAt: new Date(now.getTime() + RESET_MINUTES * 60_000),
    });
  });
  try {
    await sendMail({
      to: user.email,
      ...passwordResetMail({ name: user.name, link: passwordResetLink(token), validMinutes: RESET_MINUTES }),
    });
  } catch (err) {
    console.error(
      "[mail] password reset could not be sent:",
      err instanceof Error ? err.message : "unknown error",
    );
  }
}

type ResetRow = typeof passwordResets.$inferSelect & { email: string };

async function findUsableReset(db: Db | Tx, token: string, now: Date, lock: boolean): Promise<ResetRow> {
  const parsed = resetTokenSchema.safeParse(token);
  if (!parsed.success) throw notFound("Reset link");
  const query = db
    .select({ reset: passwordResets, email: users.email })
    .from(passwordResets)
    .innerJoin(users, eq(users.id, passwordResets.userId))
    .where(eq(passwordResets.tokenHash, hashToken(parsed.data)))
    .limit(1);
  const [row] = lock ? await query.for("update", { of: passwordResets }) : await query;
  if (!row) throw notFound("Reset link");
  if (row.reset.usedAt) {
    throw new AppError(
      "unprocessable",
      "This link has already been used. Sign in with your new password, or ask for a new link.",
    );
  }
  if (row.reset.expiresAt.getTime() <= now.getTime()) {
    throw new AppError("unprocessable", "This link has expired (links last one hour). Ask for a new one.");
  }
  return { ...row.reset, email: row.email };
}

/**
 * What the reset page shows: the account's address.
 * @throws 404 unknown token; 422 used or expired link
 */
export async function getPasswordReset(db: Db, token: string, now = new Date()): Promise<{ email: string }> {
  const row = await findUsableReset(db, token, now, false);
  return { email: row.email };
}

/**
 * Set the new password, use up the link and lift any lock-out, in one transaction.
 * @throws 404 unknown token; 422 used/expired link or a password outside the policy
 */
export async function resetPassword(
  db: Db,
  input: { token: string; password: string },
  now = new Date(),
): Promise<{ userId: string; email: string }> {
  const { token, password } = resetPasswordSchema.parse(input);
  return db.transaction(async (tx) => {
    const reset = await findUsableReset(tx, token, now, true);
    const problem = checkPasswordPolicy(password);
    if (problem) throw new AppError("unprocessable", `Choose another password: ${problem}`);
    await tx
      .update(users)
      .set({ passwordHash: await hashPassword(password), failedSignIns: 0, lockedUntil: null })
      .where(eq(users.id, reset.userId));
    await tx.update(passwordResets).set({ usedAt: now }).where(eq(passwordResets.id, reset.id));
    // Any other pending link of this account stops working too.
    await tx
      .delete(passwordResets)
      .where(
        and(
          eq(passwordResets.userId, reset.userId),
          ne(passwordResets.id, reset.id),
          isNull(passwordResets.usedAt),
        ),
      );
    const facilities = await tx
      .select({ facilityId: memberships.facilityId })
      .from(memberships)
      .where(eq(memberships.userId, reset.userId));
    for (const f of facilities) {
      await insertAuditEntry(tx, {
        facilityId: f.facilityId,
        userId: reset.userId,
        action: "password.reset",
        targetType: "user",
        targetId: reset.userId,
        details: { via: "e-mail link" },
      });
    }
    return { userId: reset.userId, email: reset.email };
  });
}
