import type { Db } from "../db/client";
import { listPeopleByFacility } from "../db/queries/users";
import { requirePermission, type Actor } from "../auth/permissions";

/** The facility's members and roles (admins only). */
export async function listPeople(db: Db, actor: Actor) {
  requirePermission(actor, "people.manage");
  return listPeopleByFacility(db, { facilityId: actor.facilityId });
}
