import type { Db, Tx } from "../client";
import { auditLog } from "../schema";

export async function insertAuditEntry(db: Db | Tx, values: typeof auditLog.$inferInsert) {
  await db.insert(auditLog).values(values);
}
