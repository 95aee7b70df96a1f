/**
 * Per-person, per-facility choice of automatic mail (reminder digests, out-of-spec
 * alerts, the weekly digest for admins). Every such mail carries a one-click
 * unsubscribe link whose token is an HMAC of `userId:facilityId:kind` under a key
 * derived from AUTH_SECRET — nothing is stored for tokens, and a token cannot be
 * forged or turned into another person's or another kind's without the secret.
 */
import { createHmac, timingSafeEqual } from "node:crypto";
import { and, eq } from "drizzle-orm";
import { z } from "zod";
import type { Db } from "../db/client";
import { facilities, mailPreferences, memberships } from "../db/schema";
import { insertAuditEntry } from "../db/queries/audit";
import { requirePermission, type Actor } from "../auth/permissions";
import { notFound } from "../http/errors";
import { appUrl, getEnv } from "../../env";
import { sendMail, type MailResult } from "../mail/mailer";
import { withUnsubscribeLink, type RenderedMail } from "../mail/templates";

export const MAIL_KINDS = ["reminders", "alerts", "weekly_digest"] as const;
export type MailKind = (typeof MAIL_KINDS)[number];

export const MAIL_KIND_WORDS: Record<MailKind, string> = {
  reminders: "daily reminders of bead checks to plan",
  alerts: "alerts when a bead check is out of spec",
  weekly_digest: "the weekly summary for admins",
};

export interface MailPreferenceSet {
  reminders: boolean;
  alerts: boolean;
  weeklyDigest: boolean;
}

export const mailPreferencesSchema = z
  .object({ reminders: z.boolean(), alerts: z.boolean(), weeklyDigest: z.boolean() })
  .strict();

const UUID = "[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}";
const TOKEN_RE = new RegExp(
  `^(${UUID})\\.(${UUID})\\.(reminders|alerts|weekly_digest)\\.([A-Za-z0-9_-]{43})$`,
);

/** A key for unsubscribe tokens only, so a leaked token says nothing about session keys. */
function tokenKey(): Buffer {
  return createHmac("sha256", getEnv().AUTH_SECRET).update("beadbench unsubscribe v1").digest();
}

function mac(userId: string, facilityId: string, kind: MailKind): Buffer {
  return createHmac("sha256", tokenKey()).update(`${userId}:${facilityId}:${kind}`).digest();
}

/** The token of one person's unsubscribe link for one kind of mail from one facility. */
export function unsubscribeToken(userId: string, facilityId: string, kind: MailKind): string {
  return `${userId}.${facilityId}.${kind}.${mac(userId, facilityId, kind).toString("base64url")}`;
}

export function unsubscribeLink(userId: string, facilityId: string, kind: MailKind): string {
  return appUrl(`/unsubscribe/${unsubscribeToken(userId, facilityId, kind)}`);
}

/** Extra headers for a mail with an unsubscribe link (RFC 2369). */
export function unsubscribeHeaders(link: string): Record<string, string> {
  return { "List-Unsubscribe": `<${link}>` };
}

/**
 * Send one automatic mail to each person, one message each: every copy carries that person's
 * own unsubscribe link (body and List-Unsubscribe header). Returns the last send's result.
 */
export async function sendToEachWithUnsubscribe(
  people: ReadonlyArray<{ userId: string; email: string }>,
  facilityId: string,
  kind: MailKind,
  mail: RenderedMail,
): Promise<MailResult | undefined> {
  let sent: MailResult | undefined;
  for (const p of people) {
    const link = unsubscribeLink(p.userId, facilityId, kind);
    sent = await sendMail({
      to: p.email,
      ...withUnsubscribeLink(mail, { link, what: MAIL_KIND_WORDS[kind] }),
      headers: unsubscribeHeaders(link),
    });
  }
  return sent;
}

/** The person, facility and kind a token stands for, or null when it is malformed or forged. */
export function verifyUnsubscribeToken(
  token: string,
): { userId: string; facilityId: string; kind: MailKind } | null {
  const m = TOKEN_RE.exec(token);
  if (!m) return null;
  const [, userId, facilityId, kind, sig] = m as unknown as [string, string, string, MailKind, string];
  const expected = mac(userId, facilityId, kind);
  const given = Buffer.from(sig, "base64url");
  if (given.length !== expected.length || !timingSafeEqual(given, expected)) return null;
  return { userId, facilityId, kind };
}

function toSet(row: typeof mailPreferences.$inferSelect | undefined): MailPreferenceSet {
  return {
    reminders: row?.reminders ?? true,
    alerts: row?.alerts ?? true,
    weeklyDigest: row?.weeklyDigest ?? true,
  };
}

async function readPreferences(db: Db, userId: string, facilityId: string): Promise<MailPreferenceSet> {
  const [row] = await db
    .select()
    .from(mailPreferences)
    .where(and(eq(mailPreferences.userId, userId), eq(mailPreferences.facilityId, facilityId)));
  return toSet(row);
}

async function writePreferences(
  db: Db,
  userId: string,
  facilityId: string,
  values: Partial<MailPreferenceSet>,
  source: "settings" | "unsubscribe_link",
): Promise<MailPreferenceSet> {
  return db.transaction(async (tx) => {
    const [row] = await tx
      .insert(mailPreferences)
      .values({ userId, facilityId, ...values })
      .onConflictDoUpdate({
        target: [mailPreferences.userId, mailPreferences.facilityId],
        set: { ...values, updatedAt: new Date() },
      })
      .returning();
    await insertAuditEntry(tx, {
      facilityId,
      userId,
      action: "mail_preferences.update",
      targetType: "user",
      targetId: userId,
      details: { ...values, source },
    });
    return toSet(row);
  });
}

/** The actor's own choices for their current facility (settings page). */
export async function getMailPreferences(db: Db, actor: Actor): Promise<MailPreferenceSet> {
  requirePermission(actor, "settings.open");
  return readPreferences(db, actor.userId, actor.facilityId);
}

/** Switch the actor's own kinds of mail on or off for their current facility. */
export async function setMailPreferences(
  db: Db,
  actor: Actor,
  input: MailPreferenceSet,
): Promise<MailPreferenceSet> {
  requirePermission(actor, "settings.open");
  const values = mailPreferencesSchema.parse(input);
  return writePreferences(db, actor.userId, actor.facilityId, values, "settings");
}

const COLUMN_OF: Record<MailKind, keyof MailPreferenceSet> = {
  reminders: "reminders",
  alerts: "alerts",
  weekly_digest: "weeklyDigest",
};

/**
 * The public unsubscribe link: turns one kind off (or back on, for "undo") for the
 * person and facility the token names.
 * @throws 404 for a malformed or forged token, or one whose person is no longer a member
 */
export async function applyUnsubscribeToken(
  db: Db,
  token: string,
  { subscribe = false }: { subscribe?: boolean } = {},
): Promise<{ kind: MailKind; facilityName: string; on: boolean }> {
  const parsed = verifyUnsubscribeToken(token);
  if (!parsed) throw notFound("Unsubscribe link");
  const [member] = await db
    .select({ facilityName: facilities.name })
    .from(memberships)
    .innerJoin(facilities, eq(facilities.id, memberships.facilityId))
    .where(and(eq(memberships.userId, parsed.userId), eq(memberships.facilityId, parsed.facilityId)));
  if (!member) throw notFound("Unsubscribe link");
  const column = COLUMN_OF[parsed.kind];
  const current = await readPreferences(db, parsed.userId, parsed.facilityId);
  if (current[column] !== subscribe) {
    await writePreferences(db, parsed.userId, parsed.facilityId, { [column]: subscribe }, "unsubscribe_link");
  }
  return { kind: parsed.kind, facilityName: member.facilityName, on: subscribe };
}
