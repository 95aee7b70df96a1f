/**
 * Who may call what, over HTTP: every v1 route (lists, one row by id, the POSTs and
 * PATCHes with a minimal valid body) as anonymous, as each demo role, as an admin of
 * another facility and with an expired session cookie. Expected statuses follow the
 * role matrix of DESIGN.md §7 and DEVELOPERS.md "404, not 403, across facilities":
 * 401 without a valid credential, 403 when the caller can see the row but the role may
 * not do that, 404 for a row of another facility, another user's sample work (for a
 * researcher) or an instrument outside the engineer's current visit.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/server/db/client";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";
import { api, tokenFor } from "./api-client";
import { demoEngineerVisitId, demoInstrument, demoObjective, otherFacilityToken } from "./demo-ids";

type Caller = "anonymous" | "admin" | "staff" | "researcher" | "engineer" | "other facility" | "expired";
const CALLERS: Caller[] = [
  "anonymous",
  "admin",
  "staff",
  "researcher",
  "engineer",
  "other facility",
  "expired",
];

interface Ids {
  oil: string; // 63×/1.40 oil on the confocal: outside the engineer's visit
  silicone: string; // 60×/1.35 silicone on the spinning disk: the engineer's visit
  confocal: string;
  objective: string; // an objective this test creates (logbook events and edits land here)
  staffStack: string;
  researcherStack: string;
  staffSample: string; // a sample measurement by staff
  researcherSample: string; // a sample measurement by the researcher
  visit: string;
}

interface Route {
  name: string;
  method: "GET" | "POST" | "PATCH";
  path: (ids: Ids) => string;
  body?: (ids: Ids) => { body: BodyInit; headers?: Record<string, string> };
  /** Expected status for the roles; anonymous and expired are always 401 unless `public`. */
  expect: Record<"admin" | "staff" | "researcher" | "engineer" | "other facility", number>;
  public?: boolean;
  /** The route creates an objective: retire it afterwards so the demo's lists stay short. */
  createsObjective?: boolean;
}

let seq = Date.now() % 100_000;
function tiffForm(): { body: BodyInit } {
  // Fresh bytes every time: identical bytes would be recognised as a duplicate (200, not 201).
  const demo = makeDemoBeadStack({
    na: 1.4,
    immersionRi: 1.518,
    sampleRi: 1.518,
    emissionWavelengthNm: 520,
    shape: [24, 48, 48],
    beadCount: 3,
    seed: seq++,
  });
  const form = new FormData();
  form.append("file", new Blob([demo.tiff as BlobPart], { type: "image/tiff" }), "access-matrix.tif");
  return { body: form };
}
const jsonBody = (value: unknown) => ({
  body: JSON.stringify(value),
  headers: { "Content-Type": "application/json" },
});
const sampleMeasurement = (stackId: string, objectiveId: string) => ({
  stackId,
  objectiveId,
  purpose: "sample",
  emissionWavelengthNm: 520,
  modality: "widefield",
  sampleRi: 1.38,
  beadDiameterNm: 100,
});

// prettier-ignore
const ROUTES: Route[] = [
  { name: "OpenAPI document", method: "GET", path: () => "/api/v1/openapi.json", public: true,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 200, "other facility": 200 } },
  // Lists answer with the caller's own facility (filtered for the engineer and the researcher).
  { name: "list instruments", method: "GET", path: () => "/api/v1/instruments",
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 200, "other facility": 200 } },
  { name: "list objectives", method: "GET", path: () => "/api/v1/objectives",
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 200, "other facility": 200 } },
  { name: "list media", method: "GET", path: () => "/api/v1/media",
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 200, "other facility": 200 } },
  { name: "list stacks", method: "GET", path: () => "/api/v1/stacks",
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 200, "other facility": 200 } },
  // Researchers have no service-visit rights at all (DESIGN.md §7): the role is refused.
  { name: "list service visits", method: "GET", path: () => "/api/v1/service-visits",
    expect: { admin: 200, staff: 200, researcher: 403, engineer: 200, "other facility": 200 } },
  // One row by id.
  { name: "objective outside the engineer's visit", method: "GET", path: (i) => `/api/v1/objectives/${i.oil}`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  { name: "objective on the engineer's visit", method: "GET", path: (i) => `/api/v1/objectives/${i.silicone}`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 200, "other facility": 404 } },
  { name: "objective trend", method: "GET", path: (i) => `/api/v1/objectives/${i.oil}/trend`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  // Researchers and engineers see only the stacks they uploaded themselves.
  { name: "staff's stack", method: "GET", path: (i) => `/api/v1/stacks/${i.staffStack}`,
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 404, "other facility": 404 } },
  { name: "staff's stack thumbnail", method: "GET", path: (i) => `/api/v1/stacks/${i.staffStack}/thumbnail?size=64`,
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 404, "other facility": 404 } },
  { name: "researcher's stack", method: "GET", path: (i) => `/api/v1/stacks/${i.researcherStack}`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  { name: "staff's sample measurement", method: "GET", path: (i) => `/api/v1/measurements/${i.staffSample}`,
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 404, "other facility": 404 } },
  { name: "researcher's sample measurement", method: "GET", path: (i) => `/api/v1/measurements/${i.researcherSample}`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  { name: "beads of the researcher's measurement", method: "GET", path: (i) => `/api/v1/measurements/${i.researcherSample}/beads`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  { name: "the engineer's service visit", method: "GET", path: (i) => `/api/v1/service-visits/${i.visit}`,
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 200, "other facility": 404 } },
  // Writes, with a minimal valid body.
  { name: "planner for the oil objective", method: "POST", path: () => "/api/v1/planner",
    body: (i) => jsonBody({ objectiveIds: [i.oil], mediumId: "water", emissionWavelengthNm: 520, modality: "widefield", depthsUm: [0, 10] }),
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  { name: "create an instrument", method: "POST", path: () => "/api/v1/instruments",
    body: () => jsonBody({ name: "Access check stand (e2e)", modality: "widefield" }),
    expect: { admin: 201, staff: 201, researcher: 403, engineer: 403, "other facility": 201 } },
  { name: "create an objective", method: "POST", path: () => "/api/v1/objectives", createsObjective: true,
    body: () => jsonBody({ name: "10× / 0.30 air (e2e access check)", magnification: 10, na: 0.3, immersion: "air" }),
    expect: { admin: 201, staff: 201, researcher: 403, engineer: 403, "other facility": 201 } },
  { name: "edit an objective's check interval", method: "PATCH", path: (i) => `/api/v1/objectives/${i.objective}`,
    body: () => jsonBody({ checkIntervalDays: 30 }),
    expect: { admin: 200, staff: 200, researcher: 403, engineer: 403, "other facility": 404 } },
  // Tolerances are admin-only (DESIGN.md §7 "manage people, tolerances").
  { name: "edit an objective's acceptance limit", method: "PATCH", path: (i) => `/api/v1/objectives/${i.objective}`,
    body: () => jsonBody({ axialRatioLimit: 1.5 }),
    expect: { admin: 200, staff: 403, researcher: 403, engineer: 403, "other facility": 404 } },
  { name: "add a logbook event", method: "POST", path: (i) => `/api/v1/objectives/${i.objective}/events`,
    body: () => jsonBody({ kind: "cleaned", note: "e2e access check" }),
    expect: { admin: 201, staff: 201, researcher: 403, engineer: 403, "other facility": 404 } },
  // Everyone who signs in may upload (the engineer for their visit); each facility stores its own.
  { name: "upload a stack", method: "POST", path: () => "/api/v1/stacks", body: () => tiffForm(),
    expect: { admin: 201, staff: 201, researcher: 201, engineer: 201, "other facility": 201 } },
  { name: "sample measurement on the researcher's stack", method: "POST", path: () => "/api/v1/measurements",
    body: (i) => jsonBody(sampleMeasurement(i.researcherStack, i.oil)),
    expect: { admin: 202, staff: 202, researcher: 202, engineer: 403, "other facility": 404 } },
  // A researcher works on their own stacks only; someone else's is "not found" to them.
  { name: "sample measurement on staff's stack", method: "POST", path: () => "/api/v1/measurements",
    body: (i) => jsonBody(sampleMeasurement(i.staffStack, i.oil)),
    expect: { admin: 202, staff: 202, researcher: 404, engineer: 403, "other facility": 404 } },
  // The other facility's admin may plan visits, but not to our instruments (refused like an unknown id).
  { name: "plan a service visit", method: "POST", path: () => "/api/v1/service-visits",
    body: (i) => jsonBody({ title: "Access check visit (e2e)", instrumentIds: [i.confocal], startsAt: "2099-01-04", endsAt: "2099-01-05" }),
    expect: { admin: 201, staff: 201, researcher: 403, engineer: 403, "other facility": 422 } },
];

const CELLS = ROUTES.flatMap((route) =>
  CALLERS.map((caller) => {
    const status =
      caller === "anonymous" || caller === "expired" ? (route.public ? 200 : 401) : route.expect[caller];
    return { label: `${route.method} ${route.name}`, route, caller, status };
  }),
);

const tokens = {} as Record<Caller, string | null>;
const createdObjectives: Array<{ id: string; caller: Caller }> = [];
const ids = {} as Ids;

async function uploadAs(token: string): Promise<string> {
  const r = await api(token, "POST", "/api/v1/stacks", tiffForm());
  expect(r.status).toBe(201);
  return r.json.id as string;
}

async function sampleAs(token: string, stackId: string): Promise<string> {
  const r = await api(token, "POST", "/api/v1/measurements", jsonBody(sampleMeasurement(stackId, ids.oil)));
  expect(r.status).toBe(202);
  return r.json.id as string;
}

beforeAll(async () => {
  tokens.anonymous = null;
  tokens.expired = null;
  for (const role of ["admin", "staff", "researcher", "engineer"] as const) {
    tokens[role] = await tokenFor(`${role}@larkspur.example`);
  }
  tokens["other facility"] = await otherFacilityToken();
  ids.oil = (await demoObjective("63× / 1.40 oil")).id;
  ids.silicone = (await demoObjective("60× / 1.35 silicone")).id;
  ids.confocal = (await demoInstrument("Confocal North (room 2.14)")).id;
  ids.visit = await demoEngineerVisitId();
  const created = await api(
    tokens.staff,
    "POST",
    "/api/v1/objectives",
    jsonBody({ name: "20× / 0.50 air (e2e access matrix)", magnification: 20, na: 0.5, immersion: "air" }),
  );
  expect(created.status).toBe(201);
  ids.objective = created.json.id as string;
  createdObjectives.push({ id: ids.objective, caller: "staff" });
  ids.staffStack = await uploadAs(tokens.staff!);
  ids.researcherStack = await uploadAs(tokens.researcher!);
  ids.staffSample = await sampleAs(tokens.staff!, ids.staffStack);
  ids.researcherSample = await sampleAs(tokens.researcher!, ids.researcherStack);
});
afterAll(async () => {
  // Retired, not deleted: the rows stay (with their audit entries) but leave the planner and dashboard.
  for (const o of createdObjectives) {
    await api(tokens[o.caller], "PATCH", `/api/v1/objectives/${o.id}`, jsonBody({ retired: true }));
  }
  await closeDb();
});

describe("access matrix over HTTP", () => {
  it.each(CELLS)("$label as $caller → $status", async ({ route, caller, status }) => {
    const init: { body?: BodyInit; headers?: Record<string, string> } = route.body?.(ids) ?? {};
    const headers: Record<string, string> = { ...(init.headers ?? {}) };
    // An expired or forged session cookie (Auth.js cannot decrypt it).
    if (caller === "expired") headers.Cookie = "authjs.session-token=expired-or-forged";
    const r = await api(tokens[caller], route.method, route.path(ids), { body: init.body, headers });
    expect(r.status, r.text.slice(0, 300)).toBe(status);
    if (route.createsObjective && status === 201) createdObjectives.push({ id: r.json.id as string, caller });
    if (status === 401) {
      expect(r.json.error?.code).toBe(caller === "expired" ? "session_expired" : "unauthenticated");
    }
    if (status === 404 || status === 403) {
      // The error body is the documented JSON shape and says nothing about the other facility.
      expect(r.json.error?.code).toBe(status === 404 ? "not_found" : "forbidden");
    }
  });
});
