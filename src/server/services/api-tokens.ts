import { randomBytes } from "node:crypto";
import { and, desc, eq, isNull } from "drizzle-orm";
import type { Db } from "../db/client";
import { apiTokens } from "../db/schema";
import { insertAuditEntry } from "../db/queries/audit";
import { requirePermission, type Actor } from "../auth/permissions";
import { hashToken } from "./actor";

/** Create a personal token; the secret is returned once and only its hash is stored. */
export async function createApiToken(db: Db, actor: Actor, input: { name: string; expiresInDays?: number }) {
  requirePermission(actor, "tokens.own");
  const secret = `bb_${randomBytes(24).toString("base64url")}`;
  const expiresAt = input.expiresInDays ? new Date(Date.now() + input.expiresInDays * 86400_000) : null;
  return db.transaction(async (tx) => {
    const [row] = await tx
      .insert(apiTokens)
      .values({
        userId: actor.userId,
        facilityId: actor.facilityId,
        name: input.name,
        tokenHash: hashToken(secret),
        prefix: secret.slice(0, 7),
        expiresAt,
      })
      .returning({
        id: apiTokens.id,
        name: apiTokens.name,
        prefix: apiTokens.prefix,
        expiresAt: apiTokens.expiresAt,
      });
    await insertAuditEntry(tx, {
      facilityId: actor.facilityId,
      userId: actor.userId,
      action: "api_token.create",
      targetType: "api_token",
      targetId: row!.id,
    });
    return { ...row!, token: secret };
  });
}

export async function listApiTokens(db: Db, actor: Actor) {
  return db
    .select({
      id: apiTokens.id,
      name: apiTokens.name,
      prefix: apiTokens.prefix,
      lastUsedAt: apiTokens.lastUsedAt,
      expiresAt: apiTokens.expiresAt,
      createdAt: apiTokens.createdAt,
    })
    .from(apiTokens)
    .where(
      and(
        eq(apiTokens.userId, actor.userId),
        eq(apiTokens.facilityId, actor.facilityId),
        isNull(apiTokens.revokedAt),
      ),
    )
    .orderBy(desc(apiTokens.createdAt));
}

export async function revokeApiToken(db: Db, actor: Actor, id: string) {
  await db.transaction(async (tx) => {
    const rows = await tx
      .update(apiTokens)
      .set({ revokedAt: new Date() })
      .where(and(eq(apiTokens.id, id), eq(apiTokens.userId, actor.userId), isNull(apiTokens.revokedAt)))
      .returning({ id: apiTokens.id });
    if (rows.length) {
      await insertAuditEntry(tx, {
        facilityId: actor.facilityId,
        userId: actor.userId,
        action: "api_token.revoke",
        targetType: "api_token",
        targetId: id,
      });
    }
  });
}
