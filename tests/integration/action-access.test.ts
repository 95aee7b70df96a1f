/**
 * Server actions, by the services they call: each action resolves its caller with
 * requireApiActor/requirePageActor (tests/unit/server/server-actions.test.ts checks that in the
 * source) and hands the actor to one service, so the role and facility rules live here. One row
 * per signed-in action, as each role of facility A and as the admin of facility B (for whom A's
 * rows must be "not found", never "forbidden": DEVELOPERS.md "404, not 403, across facilities").
 * The public actions (sign-in, accepting an invitation, password reset, unsubscribe) carry their
 * own credential and are covered in sign-in, mail, password-reset and mail-preferences tests.
 *
 * Also the three access rules tightened with the HTTP matrix (tests/e2e/access-matrix.test.ts):
 * an engineer signs off a visit only while it lasts, uploads only during a visit of theirs, and
 * a measurement may only name a visit its creator can see.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq, isNull } from "drizzle-orm";
import { closeDb, getDb } from "@/server/db/client";
import { apiTokens, invitations, memberships, serviceVisits } from "@/server/db/schema";
import type { Role } from "@/server/auth/permissions";
import { actorForToken, actorForUser } from "@/server/services/actor";
import { createApiToken, revokeApiToken } from "@/server/services/api-tokens";
import { createInstrument, createObjective } from "@/server/services/instruments";
import { inviteUser, revokeInvitation } from "@/server/services/invitations";
import { getMailPreferences, setMailPreferences } from "@/server/services/mail-preferences";
import { createMeasurement } from "@/server/services/measurements";
import { changeRole } from "@/server/services/people";
import { createServiceVisit, signOffServiceVisit } from "@/server/services/service-visits";
import { requireUploadRight } from "@/server/services/stacks";
import { makeFacility, outcome, registerTinyStack, type TestFacility } from "./helpers";

let a: TestFacility;
let b: TestFacility;
const DAY = 86_400_000;

beforeAll(async () => {
  a = await makeFacility("actions-a");
  b = await makeFacility("actions-b");
});
afterAll(async () => {
  await closeDb();
});

type Caller = Role | "other facility";
const CALLERS: Caller[] = ["admin", "staff", "researcher", "engineer", "other facility"];
const actorOf = (c: Caller) => (c === "other facility" ? b.actors.admin : a.actors[c]);

let seq = 0;
const objectiveInput = (name: string) => ({
  name,
  magnification: 20,
  na: 0.8,
  immersion: "air" as const,
  designCoverslipUm: 170,
  checkIntervalDays: 30,
  lateralRatioLimit: 1.5,
  axialRatioLimit: 1.5,
});

/** A pending invitation of facility A (made by A's admin, mailed to the outbox or SMTP_URL). */
async function pendingInvitation(): Promise<string> {
  const { invitation } = await inviteUser(getDb(), a.actors.admin, {
    email: `invitee-${seq++}-${Date.now()}@test.example`,
    role: "researcher",
  });
  return invitation.id;
}

// Source: DESIGN.md §7 role matrix and src/server/auth/permissions.ts (our product's own specification).
const ACTIONS: Array<{
  action: string;
  run: (c: Caller) => Promise<unknown>;
  expected: Record<Caller, string>;
}> = [
  {
    action: "addInstrumentAction → createInstrument",
    run: (c) =>
      createInstrument(getDb(), actorOf(c), {
        name: `stand ${seq++}`,
        modality: "widefield",
        stand: "inverted",
      }),
    expected: {
      admin: "ok",
      staff: "ok",
      researcher: "forbidden",
      engineer: "forbidden",
      "other facility": "ok",
    },
  },
  {
    action: "addObjectiveAction → createObjective on A's instrument",
    run: (c) =>
      createObjective(getDb(), actorOf(c), {
        ...objectiveInput(`obj ${seq++}`),
        instrumentId: a.instrumentIds[1],
      }),
    // Another facility's instrument is refused like an unknown one (422, the body names no visible row).
    expected: {
      admin: "ok",
      staff: "ok",
      researcher: "forbidden",
      engineer: "forbidden",
      "other facility": "unprocessable",
    },
  },
  {
    action: "createTokenAction → createApiToken (own tokens, every role)",
    run: (c) => createApiToken(getDb(), actorOf(c), { name: `token ${seq++}` }),
    expected: { admin: "ok", staff: "ok", researcher: "ok", engineer: "ok", "other facility": "ok" },
  },
  {
    action: "inviteAction → inviteUser",
    run: (c) =>
      inviteUser(getDb(), actorOf(c), { email: `new-${seq++}-${Date.now()}@test.example`, role: "staff" }),
    expected: {
      admin: "ok",
      staff: "forbidden",
      researcher: "forbidden",
      engineer: "forbidden",
      "other facility": "ok",
    },
  },
  {
    action: "revokeInvitationAction → revokeInvitation of A's invitation",
    run: async (c) => revokeInvitation(getDb(), actorOf(c), await pendingInvitation()),
    expected: {
      admin: "ok",
      staff: "forbidden",
      researcher: "forbidden",
      engineer: "forbidden",
      "other facility": "not_found",
    },
  },
  {
    action: "changeRoleAction → changeRole of A's researcher (to researcher: no change)",
    run: (c) => changeRole(getDb(), actorOf(c), { userId: a.actors.researcher.userId, role: "researcher" }),
    expected: {
      admin: "ok",
      staff: "forbidden",
      researcher: "forbidden",
      engineer: "forbidden",
      "other facility": "not_found",
    },
  },
  {
    action: "settings mail form → setMailPreferences (own choices)",
    run: (c) =>
      setMailPreferences(getDb(), actorOf(c), { reminders: true, alerts: true, weeklyDigest: true }),
    expected: {
      admin: "ok",
      staff: "ok",
      researcher: "forbidden",
      engineer: "forbidden",
      "other facility": "ok",
    },
  },
  {
    action: "settings page → getMailPreferences",
    run: (c) => getMailPreferences(getDb(), actorOf(c)),
    expected: {
      admin: "ok",
      staff: "ok",
      researcher: "forbidden",
      engineer: "forbidden",
      "other facility": "ok",
    },
  },
];

describe("server actions' services by caller", () => {
  for (const row of ACTIONS) {
    for (const c of CALLERS) {
      it(`${c}: ${row.action} → ${row.expected[c]}`, async () => {
        expect(await outcome(() => row.run(c))).toBe(row.expected[c]);
      });
    }
  }

  it("revokeTokenAction touches only the caller's own token", async () => {
    const t = await createApiToken(getDb(), a.actors.staff, { name: "bench PC" });
    for (const c of ["admin", "researcher", "other facility"] as const) {
      await revokeApiToken(getDb(), actorOf(c), t.id);
      expect((await actorForToken(getDb(), t.token)).userId).toBe(a.actors.staff.userId);
    }
    await revokeApiToken(getDb(), a.actors.staff, t.id);
    expect(await outcome(() => actorForToken(getDb(), t.token))).toBe("invalid_token");
    const [row] = await getDb()
      .select()
      .from(apiTokens)
      .where(and(eq(apiTokens.id, t.id), isNull(apiTokens.revokedAt)));
    expect(row).toBeUndefined();
  });

  it("switchFacilityAction: a facility the user is not a member of is ignored", async () => {
    // The action sets the cookie only for member facilities; actorForUser ignores any other value too.
    const ctx = await actorForUser(getDb(), a.actors.staff.userId, b.facilityId);
    expect(ctx?.actor.facilityId).toBe(a.facilityId);
    expect(ctx?.facilities.map((f) => f.facilityId)).toEqual([a.facilityId]);
  });

  it("a refused invitation or role change leaves nothing behind", async () => {
    const id = await pendingInvitation();
    await outcome(() => revokeInvitation(getDb(), b.actors.admin, id));
    expect(await getDb().select().from(invitations).where(eq(invitations.id, id))).toHaveLength(1);
    await outcome(() =>
      changeRole(getDb(), b.actors.admin, { userId: a.actors.engineer.userId, role: "admin" }),
    );
    const [m] = await getDb()
      .select()
      .from(memberships)
      .where(and(eq(memberships.facilityId, a.facilityId), eq(memberships.userId, a.actors.engineer.userId)));
    expect(m!.role).toBe("engineer");
  });
});

describe("engineers: the visit window (DESIGN.md §7 'assigned instruments, visit window')", () => {
  async function visit(startOffsetDays: number, endOffsetDays: number, engineer = true) {
    return createServiceVisit(getDb(), a.actors.staff, {
      title: `window ${seq++}`,
      ...(engineer ? { engineerId: a.actors.engineer.userId } : {}),
      instrumentIds: [a.instrumentIds[0]],
      startsAt: new Date(Date.now() + startOffsetDays * DAY).toISOString(),
      endsAt: new Date(Date.now() + endOffsetDays * DAY).toISOString(),
    });
  }

  it("signs off their own visit while it lasts, not before or after; staff can any time", async () => {
    const past = await visit(-3, -1);
    const future = await visit(1, 2);
    const current = await visit(-1, 1);
    expect(await outcome(() => signOffServiceVisit(getDb(), a.actors.engineer, past.id, "late"))).toBe(
      "forbidden",
    );
    expect(await outcome(() => signOffServiceVisit(getDb(), a.actors.engineer, future.id, "early"))).toBe(
      "forbidden",
    );
    const [untouched] = await getDb().select().from(serviceVisits).where(eq(serviceVisits.id, past.id));
    expect(untouched!.signedOffAt).toBeNull();
    expect(await outcome(() => signOffServiceVisit(getDb(), a.actors.engineer, current.id, "done"))).toBe(
      "ok",
    );
    expect(await outcome(() => signOffServiceVisit(getDb(), a.actors.staff, past.id, "for the file"))).toBe(
      "ok",
    );
    // Not their visit at all: not found, in the window or not.
    const notTheirs = await visit(-1, 1, false);
    expect(await outcome(() => signOffServiceVisit(getDb(), a.actors.engineer, notTheirs.id, "x"))).toBe(
      "not_found",
    );
  });

  it("uploads only during a visit of theirs", async () => {
    expect(await outcome(() => requireUploadRight(getDb(), a.actors.engineer))).toBe("ok");
    // The helper's visit runs from yesterday to tomorrow: three days on it is over.
    const later = new Date(Date.now() + 3 * DAY);
    expect(await outcome(() => requireUploadRight(getDb(), a.actors.engineer, later))).toBe("forbidden");
    for (const role of ["admin", "staff", "researcher"] as const) {
      expect(await outcome(() => requireUploadRight(getDb(), a.actors[role], later))).toBe("ok");
    }
    // An engineer of facility B has no visit at all: refused before any byte is stored.
    const [engB] = await getDb()
      .select()
      .from(serviceVisits)
      .where(eq(serviceVisits.engineerId, b.actors.engineer.userId));
    await getDb().delete(serviceVisits).where(eq(serviceVisits.id, engB!.id));
    expect(await outcome(() => registerTinyStack(b.actors.engineer))).toBe("forbidden");
  });
});

describe("a measurement names only a visit its creator can see", () => {
  let stackA: string;
  let stackB: string;
  let visitA: string;
  let visitB: string;
  beforeAll(async () => {
    stackA = await registerTinyStack(a.actors.researcher);
    stackB = await registerTinyStack(b.actors.admin);
    visitA = (
      await createServiceVisit(getDb(), a.actors.staff, {
        title: "named",
        instrumentIds: [a.instrumentIds[0]],
        startsAt: new Date(Date.now() - DAY).toISOString(),
        endsAt: new Date(Date.now() + DAY).toISOString(),
      })
    ).id;
    visitB = (
      await createServiceVisit(getDb(), b.actors.staff, {
        title: "B's own",
        instrumentIds: [b.instrumentIds[0]],
        startsAt: new Date(Date.now() - DAY).toISOString(),
        endsAt: new Date(Date.now() + DAY).toISOString(),
      })
    ).id;
  });

  // Channel 5 of a one-channel stack: every access check passes first, then the body is refused
  // (422), so nothing is queued; a refused visit answers before that.
  const input = (stackId: string, objectiveId: string, serviceVisitId: string) => ({
    stackId,
    objectiveId,
    serviceVisitId,
    purpose: "sample" as const,
    channel: 5,
    emissionWavelengthNm: 520,
    modality: "widefield" as const,
    beadDiameterNm: 100,
  });

  it("own facility's visit: allowed for staff, not found for a researcher", async () => {
    expect(
      await outcome(() =>
        createMeasurement(getDb(), a.actors.staff, input(stackA, a.objectiveIds[0], visitA)),
      ),
    ).toBe("unprocessable");
    expect(
      await outcome(() =>
        createMeasurement(getDb(), a.actors.researcher, input(stackA, a.objectiveIds[0], visitA)),
      ),
    ).toBe("not_found");
  });

  it("another facility's visit is not found, even on one's own stack and objective", async () => {
    expect(
      await outcome(() =>
        createMeasurement(getDb(), b.actors.admin, input(stackB, b.objectiveIds[0], visitA)),
      ),
    ).toBe("not_found");
    expect(
      await outcome(() =>
        createMeasurement(getDb(), b.actors.admin, input(stackB, b.objectiveIds[0], visitB)),
      ),
    ).toBe("unprocessable");
  });
});
