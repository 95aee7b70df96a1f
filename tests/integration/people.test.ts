import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq } from "drizzle-orm";
import { closeDb, getDb } from "@/server/db/client";
import { auditLog, memberships } from "@/server/db/schema";
import { changeRole } from "@/server/services/people";
import { makeFacility, type TestFacility } from "./helpers";

let f: TestFacility;
let other: TestFacility;
beforeAll(async () => {
  f = await makeFacility("people");
  other = await makeFacility("people-other");
});
afterAll(async () => {
  await closeDb();
});

describe("changeRole", () => {
  it("lets an admin change a role and records before/after", async () => {
    await changeRole(getDb(), f.actors.admin, { userId: f.actors.researcher.userId, role: "staff" });
    const [m] = await getDb()
      .select()
      .from(memberships)
      .where(
        and(eq(memberships.facilityId, f.facilityId), eq(memberships.userId, f.actors.researcher.userId)),
      );
    expect(m!.role).toBe("staff");
    const [entry] = await getDb()
      .select()
      .from(auditLog)
      .where(and(eq(auditLog.facilityId, f.facilityId), eq(auditLog.action, "membership.role_change")));
    expect(entry!.details).toEqual({ before: { role: "researcher" }, after: { role: "staff" } });
  });

  it("refuses staff, other facilities' members, and demoting the only admin", async () => {
    await expect(
      changeRole(getDb(), f.actors.staff, { userId: f.actors.engineer.userId, role: "admin" }),
    ).rejects.toMatchObject({
      code: "forbidden",
    });
    await expect(
      changeRole(getDb(), f.actors.admin, { userId: other.actors.staff.userId, role: "admin" }),
    ).rejects.toMatchObject({
      code: "not_found",
    });
    await expect(
      changeRole(getDb(), f.actors.admin, { userId: f.actors.admin.userId, role: "staff" }),
    ).rejects.toMatchObject({
      code: "conflict",
    });
    // With a second admin, the first may step down.
    await changeRole(getDb(), f.actors.admin, { userId: f.actors.staff.userId, role: "admin" });
    await expect(
      changeRole(getDb(), f.actors.admin, { userId: f.actors.admin.userId, role: "staff" }),
    ).resolves.toMatchObject({
      role: "staff",
    });
  });
});
