import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { closeDb, getDb } from "@/server/db/client";
import { users } from "@/server/db/schema";
import { LOCK_AFTER, checkPasswordPolicy, verifyCredentials } from "@/server/services/sign-in";
import { makeFacility, type TestFacility } from "./helpers";

let f: TestFacility;
beforeAll(async () => {
  f = await makeFacility("signin");
});
afterAll(async () => {
  await closeDb();
});

describe("verifyCredentials", () => {
  it("accepts the right password, case-insensitive e-mail", async () => {
    const [u] = await getDb().select().from(users).where(eq(users.id, f.actors.staff.userId));
    const r = await verifyCredentials(getDb(), u!.email.toUpperCase(), f.passwords.staff);
    expect(r.ok).toBe(true);
  });

  it("names an unknown e-mail and a wrong password differently", async () => {
    expect(await verifyCredentials(getDb(), "ghost@test.example", "x")).toEqual({
      ok: false,
      reason: "unknown_email",
    });
    const [u] = await getDb().select().from(users).where(eq(users.id, f.actors.researcher.userId));
    expect(await verifyCredentials(getDb(), u!.email, "wrong")).toEqual({
      ok: false,
      reason: "wrong_password",
    });
  });

  it(`locks the account after ${LOCK_AFTER} failures, even for the right password`, async () => {
    const [u] = await getDb().select().from(users).where(eq(users.id, f.actors.engineer.userId));
    for (let i = 0; i < LOCK_AFTER; i++) await verifyCredentials(getDb(), u!.email, "wrong");
    const r = await verifyCredentials(getDb(), u!.email, f.passwords.engineer);
    expect(r.ok).toBe(false);
    expect(r.ok ? null : r.reason).toBe("locked");
  });

  it("stores bcrypt hashes, never the password", async () => {
    const [u] = await getDb().select().from(users).where(eq(users.id, f.actors.admin.userId));
    expect(u!.passwordHash).toMatch(/^\$2[aby]\$12\$/);
    expect(u!.passwordHash).not.toContain(f.passwords.admin);
  });
});

describe("password policy", () => {
  // Source: NIST SP 800-63B §5.1.1.2 — length-based policy, at least 8 characters (we ask 12); no composition rules
  it("wants length, not composition rules", () => {
    expect(checkPasswordPolicy("short")).toMatch(/12 characters/);
    expect(checkPasswordPolicy("aaaaaaaaaaaaaaaa")).toMatch(/repeated/);
    expect(checkPasswordPolicy("correct horse battery")).toBeNull();
  });
});

describe("API tokens", () => {
  it("resolve to the owner's actor, then stop working once revoked", async () => {
    const { createApiToken, revokeApiToken } = await import("@/server/services/api-tokens");
    const { actorForToken } = await import("@/server/services/actor");
    const t = await createApiToken(getDb(), f.actors.staff, { name: "bench PC", expiresInDays: 30 });
    expect((await actorForToken(getDb(), t.token)).userId).toBe(f.actors.staff.userId);
    // Only the owner can revoke: another user's call changes nothing.
    await revokeApiToken(getDb(), f.actors.admin, t.id);
    expect((await actorForToken(getDb(), t.token)).role).toBe("staff");
    await revokeApiToken(getDb(), f.actors.staff, t.id);
    await expect(actorForToken(getDb(), t.token)).rejects.toMatchObject({ code: "invalid_token" });
  });
});
