import { and, eq } from "drizzle-orm";
import type { Db } from "../db/client";
import { memberships } from "../db/schema";
import { insertAuditEntry } from "../db/queries/audit";
import { listPeopleByFacility } from "../db/queries/users";
import { requirePermission, type Actor, type Role } from "../auth/permissions";
import { AppError, notFound } from "../http/errors";

/** The facility's members and roles (admins only). */
export async function listPeople(db: Db, actor: Actor) {
  requirePermission(actor, "people.manage");
  return listPeopleByFacility(db, { facilityId: actor.facilityId });
}

/**
 * Change a member's role (admins only). The last admin cannot be demoted, so a
 * facility is never left without someone who can manage it. Audited with
 * before/after.
 */
export async function changeRole(db: Db, actor: Actor, input: { userId: string; role: Role }) {
  requirePermission(actor, "people.manage");
  return db.transaction(async (tx) => {
    const [m] = await tx
      .select()
      .from(memberships)
      .where(and(eq(memberships.facilityId, actor.facilityId), eq(memberships.userId, input.userId)))
      .for("update");
    if (!m) throw notFound("Member");
    if (m.role === input.role) return { userId: input.userId, role: m.role };
    if (m.role === "admin") {
      const admins = await tx
        .select({ id: memberships.id })
        .from(memberships)
        .where(and(eq(memberships.facilityId, actor.facilityId), eq(memberships.role, "admin")))
        .for("update");
      if (admins.length <= 1) {
        throw new AppError("conflict", "This is the facility's only admin: make someone else admin first.");
      }
    }
    await tx.update(memberships).set({ role: input.role }).where(eq(memberships.id, m.id));
    await insertAuditEntry(tx, {
      facilityId: actor.facilityId,
      userId: actor.userId,
      action: "membership.role_change",
      targetType: "user",
      targetId: input.userId,
      details: { before: { role: m.role }, after: { role: input.role } },
    });
    return { userId: input.userId, role: input.role };
  });
}
