/**
 * The facility's audit log for admins: who did what, when, to which row, with the
 * details each service recorded (for edits, `{ before, after }` of the changed
 * fields). Newest first, in pages of AUDIT_PAGE_SIZE.
 */
import { z } from "zod";
import type { Db } from "../db/client";
import { listAuditActions, listAuditEntries } from "../db/queries/audit";
import { requirePermission, type Actor } from "../auth/permissions";

export const AUDIT_PAGE_SIZE = 50;

export const auditQuerySchema = z.object({
  /** Only actions starting with this text, e.g. "objective." or "measurement.rerun". */
  action: z
    .string()
    .trim()
    .max(60)
    .regex(/^[a-z0-9_.-]*$/i, "An action prefix has letters, digits, dots, dashes and underscores only.")
    .optional()
    .transform((v) => (v ? v : undefined)),
  page: z.coerce.number().int().min(1).max(100_000).default(1),
});
export type AuditQuery = z.input<typeof auditQuerySchema>;

export interface AuditEntry {
  id: number;
  at: Date;
  userName: string | null;
  /** No person recorded: written by the worker or a scheduled job (or by an account deleted since). */
  bySystem: boolean;
  action: string;
  targetType: string | null;
  targetId: string | null;
  details: unknown;
}

export interface AuditPage {
  entries: AuditEntry[];
  page: number;
  pageSize: number;
  hasNext: boolean;
  actionPrefix: string | null;
  /** Action names present in this facility's log, for the filter's suggestions. */
  actions: string[];
}

/** One page of the actor's facility's audit log (admins only). */
export async function listAuditLog(db: Db, actor: Actor, query: AuditQuery = {}): Promise<AuditPage> {
  requirePermission(actor, "people.manage");
  const { action, page } = auditQuerySchema.parse(query);
  const [rows, actions] = await Promise.all([
    listAuditEntries(db, {
      facilityId: actor.facilityId,
      actionPrefix: action,
      limit: AUDIT_PAGE_SIZE + 1,
      offset: (page - 1) * AUDIT_PAGE_SIZE,
    }),
    listAuditActions(db, { facilityId: actor.facilityId }),
  ]);
  return {
    entries: rows.slice(0, AUDIT_PAGE_SIZE).map((r) => ({
      id: r.id,
      at: r.createdAt,
      userName: r.userName,
      bySystem: r.userId == null,
      action: r.action,
      targetType: r.targetType,
      targetId: r.targetId,
      details: r.details,
    })),
    page,
    pageSize: AUDIT_PAGE_SIZE,
    hasNext: rows.length > AUDIT_PAGE_SIZE,
    actionPrefix: action ?? null,
    actions,
  };
}
