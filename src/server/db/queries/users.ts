import { and, eq, inArray, isNull, or, sql } from "drizzle-orm";
import type { Db, Tx } from "../client";
import { facilities, mailPreferences, memberships, users } from "../schema";

type Q = Db | Tx;

export async function getUserByEmail(db: Q, { email }: { email: string }) {
  const [row] = await db.select().from(users).where(eq(users.email, email.trim().toLowerCase())).limit(1);
  return row;
}

export async function getUserById(db: Q, { id }: { id: string }) {
  const [row] = await db.select().from(users).where(eq(users.id, id)).limit(1);
  return row;
}

export async function recordFailedSignIn(
  db: Q,
  { userId, lockAfter, lockMinutes }: { userId: string; lockAfter: number; lockMinutes: number },
) {
  // One statement, so concurrent failures can't race past the lock.
  await db
    .update(users)
    .set({
      failedSignIns: sql`${users.failedSignIns} + 1`,
      lockedUntil: sql`case when ${users.failedSignIns} + 1 >= ${lockAfter} then now() + make_interval(mins => ${lockMinutes}) else ${users.lockedUntil} end`,
    })
    .where(eq(users.id, userId));
}

export async function recordSuccessfulSignIn(db: Q, { userId }: { userId: string }) {
  await db
    .update(users)
    .set({ failedSignIns: 0, lockedUntil: null, lastSignInAt: new Date() })
    .where(eq(users.id, userId));
}

export async function listMembershipsByUser(db: Q, { userId }: { userId: string }) {
  return db
    .select({
      facilityId: memberships.facilityId,
      role: memberships.role,
      facilityName: facilities.name,
      facilitySlug: facilities.slug,
    })
    .from(memberships)
    .innerJoin(facilities, eq(facilities.id, memberships.facilityId))
    .where(eq(memberships.userId, userId))
    .orderBy(facilities.name);
}

export async function getMembership(db: Q, { userId, facilityId }: { userId: string; facilityId: string }) {
  const [row] = await db
    .select()
    .from(memberships)
    .where(and(eq(memberships.userId, userId), eq(memberships.facilityId, facilityId)))
    .limit(1);
  return row;
}

export async function listPeopleByFacility(db: Q, { facilityId }: { facilityId: string }) {
  return db
    .select({
      userId: users.id,
      name: users.name,
      email: users.email,
      role: memberships.role,
      lastSignInAt: users.lastSignInAt,
    })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.facilityId, facilityId))
    .orderBy(users.name);
}

/**
 * Members of a facility with one of `roles` who have not switched off `kind` mail
 * (no `mail_preferences` row means everything is on), ordered by e-mail.
 */
export async function listMailRecipients(
  db: Db | Tx,
  {
    facilityId,
    roles,
    kind,
  }: {
    facilityId: string;
    roles: Array<"admin" | "staff" | "researcher" | "engineer">;
    kind: "reminders" | "alerts" | "weekly_digest";
  },
): Promise<Array<{ userId: string; email: string }>> {
  const column =
    kind === "reminders"
      ? mailPreferences.reminders
      : kind === "alerts"
        ? mailPreferences.alerts
        : mailPreferences.weeklyDigest;
  return db
    .select({ userId: users.id, email: users.email })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .leftJoin(
      mailPreferences,
      and(eq(mailPreferences.userId, users.id), eq(mailPreferences.facilityId, memberships.facilityId)),
    )
    .where(
      and(
        eq(memberships.facilityId, facilityId),
        inArray(memberships.role, roles),
        or(isNull(column), eq(column, true)),
      ),
    )
    .orderBy(users.email);
}
