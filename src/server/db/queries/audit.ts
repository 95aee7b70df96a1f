import { and, asc, desc, eq, like } from "drizzle-orm";
import type { Db, Tx } from "../client";
import { auditLog, users } from "../schema";

export async function insertAuditEntry(db: Db | Tx, values: typeof auditLog.$inferInsert) {
  await db.insert(auditLog).values(values);
}

/** A facility's audit rows, newest first, optionally only actions starting with a prefix. */
export async function listAuditEntries(
  db: Db | Tx,
  {
    facilityId,
    actionPrefix,
    limit,
    offset,
  }: { facilityId: string; actionPrefix?: string; limit: number; offset: number },
) {
  const escaped = actionPrefix?.replace(/[\\%_]/g, (c) => `\\${c}`);
  return db
    .select({
      id: auditLog.id,
      createdAt: auditLog.createdAt,
      userId: auditLog.userId,
      userName: users.name,
      action: auditLog.action,
      targetType: auditLog.targetType,
      targetId: auditLog.targetId,
      details: auditLog.details,
    })
    .from(auditLog)
    .leftJoin(users, eq(users.id, auditLog.userId))
    .where(
      and(eq(auditLog.facilityId, facilityId), escaped ? like(auditLog.action, `${escaped}%`) : undefined),
    )
    .orderBy(desc(auditLog.createdAt), desc(auditLog.id))
    .limit(limit)
    .offset(offset);
}

/** The distinct action names a facility's audit log holds (for the filter). */
export async function listAuditActions(db: Db | Tx, { facilityId }: { facilityId: string }) {
  const rows = await db
    .selectDistinct({ action: auditLog.action })
    .from(auditLog)
    .where(eq(auditLog.facilityId, facilityId))
    .orderBy(asc(auditLog.action));
  return rows.map((r) => r.action);
}
