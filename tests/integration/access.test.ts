import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb, getDb } from "@/server/db/client";
import type { Role } from "@/server/auth/permissions";
import {
  createInstrument,
  createObjective,
  getInstrument,
  getObjective,
  listInstruments,
  listObjectives,
  patchObjective,
} from "@/server/services/instruments";
import { listPeople } from "@/server/services/people";
import { listServiceVisits } from "@/server/services/service-visits";
import { getDashboard } from "@/server/services/dashboard";
import { makeFacility, outcome, type TestFacility } from "./helpers";

let a: TestFacility;
let b: TestFacility;

beforeAll(async () => {
  a = await makeFacility("a");
  b = await makeFacility("b");
});
afterAll(async () => {
  await closeDb();
});

// Source: DESIGN.md §7 role matrix (our product's own specification), one row per cell.
const matrix: Array<{
  action: string;
  run: (role: Role) => Promise<unknown>;
  expected: Record<Role, string>;
}> = [
  {
    action: "create an instrument",
    run: (role) =>
      createInstrument(getDb(), a.actors[role], {
        name: `new ${role}`,
        modality: "widefield",
        stand: "inverted",
      }),
    expected: { admin: "ok", staff: "ok", researcher: "forbidden", engineer: "forbidden" },
  },
  {
    action: "create an objective",
    run: (role) =>
      createObjective(getDb(), a.actors[role], {
        name: `obj ${role}`,
        magnification: 20,
        na: 0.8,
        immersion: "air",
        designCoverslipUm: 170,
        checkIntervalDays: 30,
        lateralRatioLimit: 1.5,
        axialRatioLimit: 1.5,
      }),
    expected: { admin: "ok", staff: "ok", researcher: "forbidden", engineer: "forbidden" },
  },
  {
    action: "change tolerances",
    run: (role) => patchObjective(getDb(), a.actors[role], a.objectiveIds[0], { axialRatioLimit: 1.6 }),
    expected: { admin: "ok", staff: "forbidden", researcher: "forbidden", engineer: "forbidden" },
  },
  {
    action: "change the check interval",
    run: (role) => patchObjective(getDb(), a.actors[role], a.objectiveIds[0], { checkIntervalDays: 28 }),
    expected: { admin: "ok", staff: "ok", researcher: "forbidden", engineer: "forbidden" },
  },
  {
    action: "list people",
    run: (role) => listPeople(getDb(), a.actors[role]),
    expected: { admin: "ok", staff: "forbidden", researcher: "forbidden", engineer: "forbidden" },
  },
  {
    action: "list service visits",
    run: (role) => listServiceVisits(getDb(), a.actors[role]),
    expected: { admin: "ok", staff: "ok", researcher: "forbidden", engineer: "ok" },
  },
  {
    action: "read the unassigned instrument",
    run: (role) => getInstrument(getDb(), a.actors[role], a.instrumentIds[1]),
    expected: { admin: "ok", staff: "ok", researcher: "ok", engineer: "not_found" },
  },
  {
    action: "read the assigned instrument",
    run: (role) => getInstrument(getDb(), a.actors[role], a.instrumentIds[0]),
    expected: { admin: "ok", staff: "ok", researcher: "ok", engineer: "ok" },
  },
];

describe("role matrix", () => {
  for (const row of matrix) {
    for (const role of ["admin", "staff", "researcher", "engineer"] as const) {
      it(`${role}: ${row.action} → ${row.expected[role]}`, async () => {
        expect(await outcome(() => row.run(role))).toBe(row.expected[role]);
      });
    }
  }
});

describe("facility isolation", () => {
  it("lists only the actor's own facility's instruments and objectives", async () => {
    const insts = await listInstruments(getDb(), a.actors.admin);
    expect(insts.every((i) => i.facilityId === a.facilityId)).toBe(true);
    expect(insts.map((i) => i.id)).not.toContain(b.instrumentIds[0]);
    const objs = await listObjectives(getDb(), a.actors.staff);
    expect(objs.map((o) => o.id)).not.toContain(b.objectiveIds[0]);
  });

  it.each(["admin", "staff", "researcher", "engineer"] as const)(
    "%s of facility A gets not_found (never forbidden) for facility B's rows",
    async (role) => {
      expect(await outcome(() => getInstrument(getDb(), a.actors[role], b.instrumentIds[0]))).toBe(
        "not_found",
      );
      expect(await outcome(() => getObjective(getDb(), a.actors[role], b.objectiveIds[0]))).toBe("not_found");
    },
  );

  it("cannot change another facility's objective even as admin", async () => {
    expect(
      await outcome(() => patchObjective(getDb(), a.actors.admin, b.objectiveIds[0], { name: "taken" })),
    ).toBe("not_found");
    const still = await getObjective(getDb(), b.actors.admin, b.objectiveIds[0]);
    expect(still.name).toBe("63× / 1.40 oil");
  });

  it("cannot mount an objective on another facility's instrument", async () => {
    const r = await outcome(() =>
      createObjective(getDb(), a.actors.admin, {
        instrumentId: b.instrumentIds[0],
        name: "sneaky",
        magnification: 10,
        na: 0.3,
        immersion: "air",
        designCoverslipUm: 170,
        checkIntervalDays: 30,
        lateralRatioLimit: 1.5,
        axialRatioLimit: 1.5,
      }),
    );
    expect(r).toBe("unprocessable");
  });

  it("the engineer's dashboard shows only the assigned instrument's objective", async () => {
    const dash = await getDashboard(getDb(), a.actors.engineer);
    expect(dash.objectives.map((o) => o.id)).toEqual([a.objectiveIds[0]]);
  });
});
