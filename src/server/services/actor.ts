/**
 * Turn an authenticated user (from a session or an API token) into an Actor for
 * one facility. A user who belongs to several facilities picks one; the choice
 * is only honoured when they are a member of it.
 */
import { createHash } from "node:crypto";
import { and, eq, isNull } from "drizzle-orm";
import type { Db } from "../db/client";
import { apiTokens } from "../db/schema";
import { getUserById, listMembershipsByUser } from "../db/queries/users";
import type { Actor, Role } from "../auth/permissions";
import { AppError } from "../http/errors";

export interface ActorContext {
  actor: Actor;
  user: { id: string; name: string; email: string };
  facilities: Array<{ facilityId: string; facilityName: string; role: Role }>;
  facilityName: string;
}

export async function actorForUser(
  db: Db,
  userId: string,
  preferredFacilityId?: string | null,
  via: Actor["via"] = "session",
): Promise<ActorContext | null> {
  const user = await getUserById(db, { id: userId });
  if (!user) return null;
  const memberships = await listMembershipsByUser(db, { userId });
  if (memberships.length === 0) return null;
  const chosen = memberships.find((m) => m.facilityId === preferredFacilityId) ?? memberships[0]!;
  return {
    actor: { userId, facilityId: chosen.facilityId, role: chosen.role, via },
    user: { id: user.id, name: user.name, email: user.email },
    facilities: memberships.map((m) => ({
      facilityId: m.facilityId,
      facilityName: m.facilityName,
      role: m.role,
    })),
    facilityName: chosen.facilityName,
  };
}

export function hashToken(token: string): string {
  return createHash("sha256").update(token).digest("hex");
}

/** Resolve `Authorization: Bearer bb_…` to an actor in the token's own facility. */
export async function actorForToken(db: Db, token: string): Promise<Actor> {
  const [row] = await db
    .select()
    .from(apiTokens)
    .where(and(eq(apiTokens.tokenHash, hashToken(token)), isNull(apiTokens.revokedAt)))
    .limit(1);
  if (!row) throw new AppError("invalid_token", "The API token is unknown or has been revoked.");
  if (row.expiresAt && row.expiresAt.getTime() < Date.now()) {
    throw new AppError("invalid_token", "The API token has expired. Create a new one in Settings.");
  }
  const ctx = await actorForUser(db, row.userId, row.facilityId, "token");
  if (!ctx || ctx.actor.facilityId !== row.facilityId) {
    throw new AppError("invalid_token", "The API token's owner no longer belongs to its facility.");
  }
  await db.update(apiTokens).set({ lastUsedAt: new Date() }).where(eq(apiTokens.id, row.id));
  return ctx.actor;
}
