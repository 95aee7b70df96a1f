/**
 * Invitations by e-mail (admins only). The link carries a random token; only its
 * SHA-256 is stored. An invitation lasts INVITATION_DAYS, works once, and a new
 * invitation to the same address replaces the pending one. Accepting creates the
 * account — or, when the address already has one, only adds the membership and
 * leaves the password alone.
 */
import { randomBytes } from "node:crypto";
import { and, desc, eq, isNull, sql } from "drizzle-orm";
import type { Db, Tx } from "../db/client";
import { facilities, invitations, memberships, serviceVisits, users } from "../db/schema";
import { insertAuditEntry } from "../db/queries/audit";
import { getUserByEmail, getUserById } from "../db/queries/users";
import { requirePermission, type Actor } from "../auth/permissions";
import { AppError, notFound } from "../http/errors";
import { mailDelivery, sendMail, type MailDelivery, type MailResult } from "../mail/mailer";
import { invitationMail } from "../mail/templates";
import { appUrl } from "../../env";
import {
  invitationTokenSchema,
  type AcceptInvitation,
  type InvitationPreview,
  type InviteUser,
  type PendingInvitation,
} from "../../contracts/invitations";
import { hashToken } from "./actor";
import { checkPasswordPolicy, hashPassword } from "./sign-in";

export const INVITATION_DAYS = 7;
const DAY_MS = 86_400_000;

function normalizeEmail(email: string): string {
  return email.trim().toLowerCase();
}

/** Where mail goes (SMTP or the outbox file), for the settings page to say so. */
export function getMailDelivery(actor: Actor): MailDelivery {
  requirePermission(actor, "settings.open");
  return mailDelivery();
}

/** The public link of an invitation. */
export function invitationLink(token: string): string {
  return appUrl(`/invite/${token}`);
}

async function isMember(db: Db | Tx, facilityId: string, email: string): Promise<boolean> {
  const [row] = await db
    .select({ id: memberships.id })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.facilityId, facilityId), eq(users.email, email)))
    .limit(1);
  return Boolean(row);
}

/**
 * Invite an address to the actor's facility with a role, and mail the link.
 * @throws 403 without people.manage, 409 when the address is already a member,
 *   503 when the invitation was saved but the mail could not be sent (invite again).
 */
export async function inviteUser(
  db: Db,
  actor: Actor,
  input: InviteUser,
  now = new Date(),
): Promise<{ invitation: PendingInvitation; delivery: MailResult["delivery"] }> {
  requirePermission(actor, "people.manage");
  const email = normalizeEmail(input.email);
  const token = randomBytes(32).toString("base64url");
  const expiresAt = new Date(now.getTime() + INVITATION_DAYS * DAY_MS);

  const { invitation, facilityName, inviterName, hasAccount } = await db.transaction(async (tx) => {
    // Serialise invitations to one address of one facility, so "replace" cannot leave two pending.
    await tx.execute(sql`select pg_advisory_xact_lock(hashtext(${`invite:${actor.facilityId}:${email}`}))`);
    if (await isMember(tx, actor.facilityId, email)) {
      throw new AppError("conflict", `${email} is already a member of this facility.`);
    }
    const replaced = await tx
      .delete(invitations)
      .where(
        and(
          eq(invitations.facilityId, actor.facilityId),
          eq(invitations.email, email),
          isNull(invitations.acceptedAt),
        ),
      )
      .returning({ id: invitations.id });
    const [row] = await tx
      .insert(invitations)
      .values({
        facilityId: actor.facilityId,
        email,
        role: input.role,
        tokenHash: hashToken(token),
        invitedBy: actor.userId,
        expiresAt,
      })
      .returning();
    await insertAuditEntry(tx, {
      facilityId: actor.facilityId,
      userId: actor.userId,
      action: "invitation.create",
      targetType: "invitation",
      targetId: row!.id,
      details: { email, role: input.role, replaced: replaced.length },
    });
    const [facility] = await tx
      .select({ name: facilities.name })
      .from(facilities)
      .where(eq(facilities.id, actor.facilityId));
    const inviter = await getUserById(tx, { id: actor.userId });
    const hasAccount = Boolean(await getUserByEmail(tx, { email }));
    return {
      invitation: row!,
      facilityName: facility?.name ?? "your facility",
      inviterName: inviter?.name ?? null,
      hasAccount,
    };
  });

  const mail = invitationMail({
    facilityName,
    inviterName,
    role: invitation.role,
    link: invitationLink(token),
    expiresAt,
    hasAccount,
  });
  let sent: MailResult;
  try {
    sent = await sendMail({ to: email, ...mail });
  } catch (err) {
    console.error(
      "[mail] invitation could not be sent:",
      err instanceof Error ? err.message : "unknown error",
    );
    throw new AppError(
      "unavailable",
      `The invitation to ${email} was saved, but the e-mail could not be sent. Check the mail settings and invite again.`,
      { cause: err },
    );
  }
  return {
    invitation: {
      id: invitation.id,
      email,
      role: invitation.role,
      invitedByName: inviterName,
      createdAt: invitation.createdAt,
      expiresAt,
      expired: false,
    },
    delivery: sent.delivery,
  };
}

/** Pending (not yet accepted) invitations of the actor's facility, newest first, expired ones flagged. */
export async function listInvitations(db: Db, actor: Actor, now = new Date()): Promise<PendingInvitation[]> {
  requirePermission(actor, "people.manage");
  const rows = await db
    .select({
      id: invitations.id,
      email: invitations.email,
      role: invitations.role,
      invitedByName: users.name,
      createdAt: invitations.createdAt,
      expiresAt: invitations.expiresAt,
    })
    .from(invitations)
    .leftJoin(users, eq(users.id, invitations.invitedBy))
    .where(and(eq(invitations.facilityId, actor.facilityId), isNull(invitations.acceptedAt)))
    .orderBy(desc(invitations.createdAt));
  return rows.map((r) => ({ ...r, expired: r.expiresAt.getTime() <= now.getTime() }));
}

/** Withdraw a pending invitation; its link stops working. */
export async function revokeInvitation(db: Db, actor: Actor, id: string): Promise<void> {
  requirePermission(actor, "people.manage");
  await db.transaction(async (tx) => {
    const [row] = await tx
      .delete(invitations)
      .where(
        and(
          eq(invitations.id, id),
          eq(invitations.facilityId, actor.facilityId),
          isNull(invitations.acceptedAt),
        ),
      )
      .returning({ id: invitations.id, email: invitations.email });
    if (!row) throw notFound("Invitation");
    await insertAuditEntry(tx, {
      facilityId: actor.facilityId,
      userId: actor.userId,
      action: "invitation.revoke",
      targetType: "invitation",
      targetId: row.id,
      details: { email: row.email },
    });
  });
}

type InvitationRow = typeof invitations.$inferSelect & { facilityName: string };

/** Find an invitation by its token, or explain why it cannot be used. */
async function findUsableInvitation(
  db: Db | Tx,
  token: string,
  now: Date,
  lock: boolean,
): Promise<InvitationRow> {
  const parsed = invitationTokenSchema.safeParse(token);
  if (!parsed.success) throw notFound("Invitation");
  const query = db
    .select({ invitation: invitations, facilityName: facilities.name })
    .from(invitations)
    .innerJoin(facilities, eq(facilities.id, invitations.facilityId))
    .where(eq(invitations.tokenHash, hashToken(parsed.data)))
    .limit(1);
  const [row] = lock ? await query.for("update", { of: invitations }) : await query;
  if (!row) throw notFound("Invitation");
  const inv = row.invitation;
  if (inv.acceptedAt) {
    throw new AppError(
      "unprocessable",
      "This invitation has already been used. Sign in with your e-mail address.",
    );
  }
  if (inv.expiresAt.getTime() <= now.getTime()) {
    throw new AppError(
      "unprocessable",
      `This invitation expired on ${inv.expiresAt.toISOString().slice(0, 10)}. Ask your facility admin for a new one.`,
    );
  }
  return { ...inv, facilityName: row.facilityName };
}

/**
 * What the public invitation page shows.
 * @throws 404 for an unknown token, 422 for a used or expired invitation
 */
export async function getInvitation(db: Db, token: string, now = new Date()): Promise<InvitationPreview> {
  const inv = await findUsableInvitation(db, token, now, false);
  const existing = await getUserByEmail(db, { email: inv.email });
  return {
    email: inv.email,
    role: inv.role,
    facilityName: inv.facilityName,
    expiresAt: inv.expiresAt,
    hasAccount: Boolean(existing),
  };
}

/**
 * Accept an invitation: a new account (name + password within the policy), or a
 * membership for an existing account (its name and password are not changed).
 * @throws 404 unknown token; 422 used/expired invitation, missing name or weak password; 409 already a member
 */
export async function acceptInvitation(
  db: Db,
  input: AcceptInvitation,
  now = new Date(),
): Promise<{ userId: string; email: string; facilityId: string; createdAccount: boolean }> {
  return db.transaction(async (tx) => {
    const inv = await findUsableInvitation(tx, input.token, now, true);
    let user = await getUserByEmail(tx, { email: inv.email });
    const createdAccount = !user;
    if (!user) {
      const name = input.name?.trim() ?? "";
      if (!name) throw new AppError("unprocessable", "Enter your name.");
      const problem = checkPasswordPolicy(input.password ?? "");
      if (problem) throw new AppError("unprocessable", `Choose another password: ${problem}`);
      const inserted = await tx
        .insert(users)
        .values({ email: inv.email, name, passwordHash: await hashPassword(input.password!) })
        .onConflictDoNothing({ target: users.email })
        .returning();
      user = inserted[0];
      if (!user)
        throw new AppError(
          "conflict",
          "An account with this e-mail address was just created. Sign in instead.",
        );
    } else if (await isMember(tx, inv.facilityId, inv.email)) {
      throw new AppError("conflict", `You are already a member of ${inv.facilityName}. Sign in instead.`);
    }
    await tx.insert(memberships).values({ facilityId: inv.facilityId, userId: user.id, role: inv.role });
    await tx.update(invitations).set({ acceptedAt: now }).where(eq(invitations.id, inv.id));
    // Visits planned for this address before the engineer had access now name them.
    const attached = await tx
      .update(serviceVisits)
      .set({ engineerId: user.id, engineerEmail: null })
      .where(
        and(
          eq(serviceVisits.facilityId, inv.facilityId),
          eq(serviceVisits.engineerEmail, inv.email),
          isNull(serviceVisits.engineerId),
        ),
      )
      .returning({ id: serviceVisits.id });
    await insertAuditEntry(tx, {
      facilityId: inv.facilityId,
      userId: user.id,
      action: "invitation.accept",
      targetType: "invitation",
      targetId: inv.id,
      details: { role: inv.role, createdAccount, ...(attached.length ? { visits: attached.length } : {}) },
    });
    return { userId: user.id, email: user.email, facilityId: inv.facilityId, createdAccount };
  });
}
