/**
 * Who may call what, over HTTP: every route handler under src/app/api with every method it
 * exports, and every page, as anonymous, as each demo role, as the admin of another facility
 * and with an expired session. Expected statuses follow the role matrix of DESIGN.md §7 and
 * src/server/auth/permissions.ts:
 *   401 without a valid credential (anonymous, or an expired session: `session_expired`);
 *   403 when the caller can see the row but the role may not do that (or the role may not do
 *       it to any row: such a refusal comes before any lookup and is the same for every id);
 *   404 for a row of another facility, another user's stack or sample measurement (for a
 *       researcher), an instrument outside the engineer's current visit, or a visit that is not
 *       the engineer's;
 *   2xx, or a 4xx validation/conflict answer, where the role is allowed.
 *
 * Another facility's row is "not found" (404), never "forbidden" (403). DESIGN.md §7: "Every
 * facility's data is invisible to every other facility"; DEVELOPERS.md "404, not 403, across
 * facilities": the API never confirms that an id exists elsewhere, so a row of another facility
 * answers exactly like an unknown id. The "other facility" caller is an admin there, so no role
 * refusal hides a missing 404.
 *
 * State-changing cells that are expected to succeed act on a throwaway row of their own
 * (`fresh`), made just before the request; refused cells share one row that a wrongly allowed
 * request would change, so a leak also breaks its neighbours rather than passing silently.
 * Rows are made through the API where that is cheap, or inserted directly (a queued measurement
 * without a job, so the worker never picks it up) where the state is the point.
 *
 * Server actions are not called over HTTP here (a `Next-Action` id is build-specific): their
 * services are checked per role in tests/integration/action-access.test.ts, a unit test checks
 * that every action resolves its actor first, and the pages hosting their forms are in the page
 * matrix at the end of this file.
 */
import { randomUUID } from "node:crypto";
import { and, eq, inArray } from "drizzle-orm";
import { encode } from "next-auth/jwt";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb, getDb } from "@/server/db/client";
import { beadResults, facilities, measurements, memberships, users } from "@/server/db/schema";
import { createApiToken } from "@/server/services/api-tokens";
import { hashPassword } from "@/server/services/sign-in";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";
import { tokenFor } from "./api-client";
import { BASE_URL, demoCredentials } from "./browser";
import { demoEngineerVisitId, demoInstrument, demoObjective } from "./demo-ids";

type Caller = "anonymous" | "admin" | "staff" | "researcher" | "engineer" | "other facility" | "expired";
type Member = "admin" | "staff" | "researcher" | "engineer" | "other facility";
const CALLERS: Caller[] = [
  "anonymous",
  "admin",
  "staff",
  "researcher",
  "engineer",
  "other facility",
  "expired",
];
const ROLES = ["admin", "staff", "researcher", "engineer"] as const;

interface Ids {
  oil: string; // 63×/1.40 oil on the confocal: outside the engineer's visit
  silicone: string; // 60×/1.35 silicone on the spinning disk: the engineer's visit
  confocal: string;
  spinningDisk: string;
  engineerUser: string;
  objective: string; // an objective this test creates (logbook events, edits and baselines land here)
  staffStack: string;
  researcherStack: string;
  engineerStack: string;
  unusedStaffStack: string;
  unusedResearcherStack: string;
  staffSample: string; // a finished sample measurement by staff
  researcherSample: string; // a finished sample measurement by the researcher
  routineCheck: string; // a finished routine check on `objective`
  firstBead: number; // a bead index of `researcherSample`
  queuedSample: string; // queued, no job: refused cancels aim here
  queuedSample2: string; // queued, no job: "re-run while queued"
  queuedRoutineOnVisit: string; // queued routine check on the silicone lens
  queuedServiceOnVisit: string; // queued pre-service check on the silicone lens
  cancelledSample: string; // refused re-runs aim here
  cancelledRoutine: string;
  visit: string; // the demo engineer's current visit
  signedVisit: string; // a visit without engineer, already signed off
  pastVisit: string; // a visit of the demo engineer's that ended yesterday, not signed off
  otherStack: string; // the other facility's own stack
  otherObjective: string; // the other facility's own objective
  staffUpload: string; // a tus upload path of staff's, unfinished
}

type Init = { body?: BodyInit; headers?: Record<string, string> };

interface Route {
  name: string;
  method: "GET" | "POST" | "PATCH" | "DELETE" | "HEAD" | "OPTIONS";
  /** `fresh` is the throwaway row of a cell expected to succeed (see Route.fresh). */
  path: (ids: Ids, fresh?: string) => string;
  body?: (ids: Ids) => Init;
  /** Expected status per member caller; anonymous and expired are always 401 unless `public`. */
  expect?: Record<Member, number>;
  /** The same status for all seven callers (public routes). */
  public?: number;
  /** A throwaway target for a cell expected to succeed (2xx), made just before the request. */
  fresh?: (caller: Member) => Promise<string>;
  /** Runs after a cell that answered 2xx (clean-up bookkeeping). */
  after?: (caller: Caller, r: Result) => void;
  /** Callers whose refusal is not our JSON error shape (the tus server's own plain 404). */
  plainFor?: Caller[];
}

interface Result {
  status: number;
  json: Record<string, unknown> & { error?: { code: string; message: string } };
  text: string;
  headers: Headers;
}

// ---------------------------------------------------------------------------------------------
// Callers and requests

const tokens = {} as Record<Member, string>;
const cookies = {} as Record<Member, string>;
let expiredCookie = "";
let other: Awaited<ReturnType<typeof makeOtherFacility>>;

/** One request as a caller: a bearer token for the API, the session cookie for pages. */
async function call(
  caller: Caller,
  method: string,
  url: string,
  init: Init = {},
  via: "token" | "session" = "token",
): Promise<Result> {
  const headers: Record<string, string> = { ...(init.headers ?? {}) };
  if (caller === "expired") headers.Cookie = expiredCookie;
  else if (caller !== "anonymous") {
    if (via === "token") headers.Authorization = `Bearer ${tokens[caller]}`;
    else headers.Cookie = cookies[caller];
  }
  const res = await fetch(`${BASE_URL}${url}`, { method, headers, body: init.body, redirect: "manual" });
  const text = method === "HEAD" ? "" : await res.text();
  let json: Result["json"] = {};
  try {
    json = JSON.parse(text);
  } catch {
    /* not JSON */
  }
  return { status: res.status, json, text, headers: res.headers };
}

/** Sign in through Auth.js's own credentials endpoint (CSRF token included) and keep the session cookie. */
async function signIn(email: string, password: string): Promise<string> {
  const csrf = await fetch(`${BASE_URL}/api/auth/csrf`);
  const jar = csrf.headers
    .getSetCookie()
    .map((c) => c.split(";")[0])
    .join("; ");
  const { csrfToken } = (await csrf.json()) as { csrfToken: string };
  const res = await fetch(`${BASE_URL}/api/auth/callback/credentials`, {
    method: "POST",
    redirect: "manual",
    headers: { "Content-Type": "application/x-www-form-urlencoded", Cookie: jar },
    body: new URLSearchParams({ email, password, csrfToken, callbackUrl: `${BASE_URL}/dashboard` }),
  });
  const session = res.headers.getSetCookie().find((c) => c.startsWith("authjs.session-token="));
  if (!session) throw new Error(`sign-in as ${email} failed: ${res.status} ${res.headers.get("location")}`);
  return session.split(";")[0]!;
}

/** An Auth.js session cookie for `userId`, signed with the app's secret, valid for `seconds` (negative: expired). */
async function sessionCookieFor(userId: string, seconds: number): Promise<string> {
  const secret = process.env.AUTH_SECRET;
  if (!secret) throw new Error("AUTH_SECRET must be the app's secret (npm test sets it)");
  const salt = "authjs.session-token";
  return `${salt}=${await encode({ token: { sub: userId, uid: userId }, secret, salt, maxAge: seconds })}`;
}

/** A second, invented facility whose admin has a password and an API token. */
async function makeOtherFacility() {
  const tag = randomUUID().slice(0, 8);
  const db = getDb();
  const password = `other-${tag}-pass`;
  const [f] = await db
    .insert(facilities)
    .values({ name: `Harrow Fen Microscopy (e2e ${tag})`, slug: `e2e-other-${tag}` })
    .returning();
  const [u] = await db
    .insert(users)
    .values({
      email: `admin-${tag}@harrowfen.example`,
      name: "Tamsin Reed",
      passwordHash: await hashPassword(password),
    })
    .returning();
  await db.insert(memberships).values({ facilityId: f!.id, userId: u!.id, role: "admin" });
  const { token } = await createApiToken(
    db,
    { userId: u!.id, facilityId: f!.id, role: "admin", via: "token" },
    { name: "e2e other facility" },
  );
  return { token, email: u!.email, password, facilityId: f!.id };
}

// ---------------------------------------------------------------------------------------------
// Bodies and throwaway rows

let seq = Date.now() % 100_000;
/** A small stack (fast to upload); fresh bytes every time, since identical bytes are a duplicate (200). */
function tiffForm(large = false): Init {
  const demo = makeDemoBeadStack({
    na: 1.4,
    immersionRi: 1.518,
    sampleRi: 1.518,
    emissionWavelengthNm: 520,
    // The large one is the demo default (48×128×128, 12 beads): enough usable beads for an averaged PSF.
    ...(large ? {} : { shape: [24, 48, 48] as [number, number, number], beadCount: 3 }),
    seed: seq++,
  });
  const form = new FormData();
  form.append("file", new Blob([demo.tiff as BlobPart], { type: "image/tiff" }), "access-matrix.tif");
  return { body: form };
}
const jsonBody = (value: unknown): Init => ({
  body: JSON.stringify(value),
  headers: { "Content-Type": "application/json" },
});
const sampleMeasurement = (stackId: string, objectiveId: string, extra: Record<string, unknown> = {}) => ({
  stackId,
  objectiveId,
  purpose: "sample",
  emissionWavelengthNm: 520,
  modality: "widefield",
  sampleRi: 1.38,
  beadDiameterNm: 100,
  ...extra,
});
const TUS = { "Tus-Resumable": "1.0.0" };

const ids = {} as Ids;
const insertedMeasurements: string[] = [];
const createdObjectives: Array<{ id: string; caller: Caller }> = [];
const createdUploads: Array<{ path: string; caller: Caller }> = [];

async function ok<T = string>(r: Result, status: number, pick: (r: Result) => T): Promise<T> {
  expect(r.status, r.text.slice(0, 300)).toBe(status);
  return pick(r);
}

async function uploadAs(caller: Member, large = false): Promise<string> {
  return ok(await call(caller, "POST", "/api/v1/stacks", tiffForm(large)), 201, (r) => r.json.id as string);
}

/** A tus upload of `caller`'s, created and left unfinished; its path. */
async function tusUploadAs(caller: Member): Promise<string> {
  const r = await call(caller, "POST", "/api/v1/uploads", {
    headers: { ...TUS, "Upload-Length": "1000" },
  });
  const path = await ok(r, 201, (res) => new URL(res.headers.get("location")!, BASE_URL).pathname);
  createdUploads.push({ path, caller });
  return path;
}

/**
 * A measurement row inserted directly, copying a real (API-made) measurement's parameters: a
 * queued row without a job stays queued (nothing races the cancel), a cancelled one can be re-run.
 */
async function insertMeasurement(
  templateId: string,
  values: {
    status: "queued" | "cancelled";
    purpose: "sample" | "routine" | "pre-service";
    objectiveId: string;
    stackId: string;
    createdBy: Member;
  },
): Promise<string> {
  const db = getDb();
  const [t] = await db
    .select({
      facilityId: measurements.facilityId,
      channel: measurements.channel,
      modality: measurements.modality,
      parameters: measurements.parameters,
    })
    .from(measurements)
    .where(eq(measurements.id, templateId));
  const [creator] = await db
    .select({ id: users.id })
    .from(users)
    .where(eq(users.email, `${values.createdBy}@larkspur.example`));
  const [row] = await db
    .insert(measurements)
    .values({
      facilityId: t!.facilityId,
      stackId: values.stackId,
      objectiveId: values.objectiveId,
      createdBy: creator!.id,
      purpose: values.purpose,
      status: values.status,
      stage: values.status,
      channel: t!.channel,
      modality: t!.modality,
      parameters: t!.parameters,
      acquiredAt: new Date(),
      finishedAt: values.status === "cancelled" ? new Date() : null,
    })
    .returning({ id: measurements.id });
  insertedMeasurements.push(row!.id);
  return row!.id;
}

async function waitDone(id: string): Promise<void> {
  for (let i = 0; i < 240; i++) {
    const [m] = await getDb()
      .select({ status: measurements.status, errorMessage: measurements.errorMessage })
      .from(measurements)
      .where(eq(measurements.id, id));
    if (m?.status === "done") return;
    if (m?.status === "failed") throw new Error(`measurement ${id} failed: ${m.errorMessage}`);
    await new Promise((r) => setTimeout(r, 500));
  }
  throw new Error(`measurement ${id} did not finish in 2 minutes`);
}

/** A visit planned by staff on the spinning disk, around now or ended yesterday (`engineer`: for the demo engineer). */
async function visitAs(engineer: boolean, when: "now" | "past" = "now"): Promise<string> {
  const now = Date.now() - (when === "past" ? 2 * 86_400_000 : 0);
  const r = await call(
    "staff",
    "POST",
    "/api/v1/service-visits",
    jsonBody({
      title: `Access check visit (e2e access matrix${engineer ? ", engineer" : ""}${when === "past" ? ", past" : ""})`,
      instrumentIds: [ids.spinningDisk],
      ...(engineer ? { engineerId: ids.engineerUser } : {}),
      startsAt: new Date(now - 3600_000).toISOString(),
      endsAt: new Date(now + (when === "past" ? 86_400_000 : 2 * 3600_000)).toISOString(),
    }),
  );
  return ok(r, 201, (res) => res.json.id as string);
}

const today = () => new Date().toISOString().slice(0, 10);
// Two days ahead: still in the future if the server's clock has just passed midnight UTC.
const future = () => new Date(Date.now() + 2 * 86_400_000).toISOString().slice(0, 10);

// ---------------------------------------------------------------------------------------------
// The routes

const ALL = (status: number): Record<Member, number> => ({
  admin: status,
  staff: status,
  researcher: status,
  engineer: status,
  "other facility": status,
});

// prettier-ignore
const ROUTES: Route[] = [
  // --- Auth.js (/api/auth/[...nextauth]: GET and POST) and the public OpenAPI document.
  { name: "Auth.js session", method: "GET", path: () => "/api/auth/session", public: 200 },
  { name: "Auth.js CSRF token", method: "GET", path: () => "/api/auth/csrf", public: 200 },
  // A credentials POST without the CSRF token is turned away before any password check.
  { name: "Auth.js credentials sign-in without a CSRF token", method: "POST", path: () => "/api/auth/callback/credentials",
    body: () => ({ body: new URLSearchParams({ email: "nobody@larkspur.example", password: "x" }),
      headers: { "Content-Type": "application/x-www-form-urlencoded" } }),
    public: 302 },
  { name: "OpenAPI document", method: "GET", path: () => "/api/v1/openapi.json", public: 200 },

  // --- Lists answer with the caller's own facility (filtered for the engineer and the researcher).
  { name: "list instruments", method: "GET", path: () => "/api/v1/instruments", expect: ALL(200) },
  { name: "list objectives", method: "GET", path: () => "/api/v1/objectives", expect: ALL(200) },
  { name: "list media", method: "GET", path: () => "/api/v1/media", expect: ALL(200) },
  { name: "list stacks", method: "GET", path: () => "/api/v1/stacks", expect: ALL(200) },
  // Researchers have no service-visit rights at all (DESIGN.md §7): the role is refused.
  { name: "list service visits", method: "GET", path: () => "/api/v1/service-visits",
    expect: { admin: 200, staff: 200, researcher: 403, engineer: 200, "other facility": 200 } },

  // --- Objectives.
  { name: "objective outside the engineer's visit", method: "GET", path: (i) => `/api/v1/objectives/${i.oil}`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  { name: "objective on the engineer's visit", method: "GET", path: (i) => `/api/v1/objectives/${i.silicone}`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 200, "other facility": 404 } },
  { name: "objective trend", method: "GET", path: (i) => `/api/v1/objectives/${i.oil}/trend`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  // "read logbooks": all roles, the engineer for the visit's instruments only.
  { name: "status on a date, outside the engineer's visit", method: "GET",
    path: (i) => `/api/v1/objectives/${i.oil}/status?date=${today()}`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  { name: "status on a date, on the engineer's visit", method: "GET",
    path: (i) => `/api/v1/objectives/${i.silicone}/status?date=${today()}`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 200, "other facility": 404 } },
  // A future date is refused before the objective is looked up, so the answer says nothing about the id.
  { name: "status on a future date", method: "GET",
    path: (i) => `/api/v1/objectives/${i.oil}/status?date=${future()}`, expect: ALL(422) },
  { name: "create an objective", method: "POST", path: () => "/api/v1/objectives",
    body: () => jsonBody({ name: "10× / 0.30 air (e2e access check)", magnification: 10, na: 0.3, immersion: "air" }),
    after: (caller, r) => createdObjectives.push({ id: r.json.id as string, caller }),
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
  // Baselines: admins and staff ("baselines only" for staff).
  { name: "add a baseline-start logbook event", method: "POST", path: (i) => `/api/v1/objectives/${i.objective}/events`,
    body: () => jsonBody({ kind: "baseline_start", note: "e2e access check" }),
    expect: { admin: 201, staff: 201, researcher: 403, engineer: 403, "other facility": 404 } },

  // --- Instruments and the planner.
  { name: "create an instrument", method: "POST", path: () => "/api/v1/instruments",
    body: () => jsonBody({ name: "Access check stand (e2e)", modality: "widefield" }),
    expect: { admin: 201, staff: 201, researcher: 403, engineer: 403, "other facility": 201 } },
  { name: "planner for the oil objective", method: "POST", path: () => "/api/v1/planner",
    body: (i) => jsonBody({ objectiveIds: [i.oil], mediumId: "water", emissionWavelengthNm: 520, modality: "widefield", depthsUm: [0, 10] }),
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  { name: "planner with an invalid body", method: "POST", path: () => "/api/v1/planner",
    body: () => jsonBody({ objectiveIds: [], emissionWavelengthNm: -1 }), expect: ALL(400) },

  // --- Stacks. Researchers and engineers see only the stacks they uploaded themselves.
  { name: "staff's stack", method: "GET", path: (i) => `/api/v1/stacks/${i.staffStack}`,
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 404, "other facility": 404 } },
  { name: "staff's stack thumbnail", method: "GET", path: (i) => `/api/v1/stacks/${i.staffStack}/thumbnail?size=64`,
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 404, "other facility": 404 } },
  { name: "researcher's stack", method: "GET", path: (i) => `/api/v1/stacks/${i.researcherStack}`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  { name: "researcher's stack thumbnail", method: "GET", path: (i) => `/api/v1/stacks/${i.researcherStack}/thumbnail?size=64`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  // Everyone who signs in may upload (the engineer for their visit); each facility stores its own.
  { name: "upload a stack", method: "POST", path: () => "/api/v1/stacks", body: () => tiffForm(),
    expect: ALL(201) },
  // Deleting is for admins and staff (stacks.delete): the role is refused before the row is looked up.
  { name: "delete an unused stack of staff's", method: "DELETE", path: (i, fresh) => `/api/v1/stacks/${fresh ?? i.unusedStaffStack}`,
    fresh: () => uploadAs("staff"),
    expect: { admin: 204, staff: 204, researcher: 403, engineer: 403, "other facility": 404 } },
  { name: "delete an unused stack of the researcher's", method: "DELETE", path: (i, fresh) => `/api/v1/stacks/${fresh ?? i.unusedResearcherStack}`,
    fresh: () => uploadAs("researcher"),
    expect: { admin: 204, staff: 204, researcher: 403, engineer: 403, "other facility": 404 } },
  { name: "delete a stack a measurement uses", method: "DELETE", path: (i) => `/api/v1/stacks/${i.staffStack}`,
    expect: { admin: 409, staff: 409, researcher: 403, engineer: 403, "other facility": 404 } },

  // --- Resumable uploads (tus 1.0.0): every upload belongs to the user and facility that created it.
  { name: "tus: create an upload", method: "POST", path: () => "/api/v1/uploads",
    body: () => ({ headers: { ...TUS, "Upload-Length": "1000" } }),
    after: (caller, r) => createdUploads.push({ caller, path: new URL(r.headers.get("location")!, BASE_URL).pathname }),
    expect: ALL(201) },
  // The protocol's discovery request (CORS preflight) is public and says nothing about uploads.
  { name: "tus: OPTIONS", method: "OPTIONS", path: () => "/api/v1/uploads", public: 204 },
  { name: "tus: offset of staff's upload", method: "HEAD", path: (i) => i.staffUpload, body: () => ({ headers: TUS }),
    expect: { admin: 404, staff: 200, researcher: 404, engineer: 404, "other facility": 404 } },
  { name: "tus: a chunk of staff's upload", method: "PATCH", path: (i, fresh) => fresh ?? i.staffUpload,
    fresh: () => tusUploadAs("staff"),
    body: () => ({ body: new Uint8Array(10), headers: { ...TUS, "Upload-Offset": "0", "Content-Type": "application/offset+octet-stream" } }),
    expect: { admin: 404, staff: 204, researcher: 404, engineer: 404, "other facility": 404 } },
  { name: "tus: terminate staff's upload", method: "DELETE", path: (i, fresh) => fresh ?? i.staffUpload,
    fresh: () => tusUploadAs("staff"), body: () => ({ headers: TUS }),
    expect: { admin: 404, staff: 204, researcher: 404, engineer: 404, "other facility": 404 } },
  // GET would download a finished upload; finished uploads are registered and removed at once, so
  // even the owner gets the tus server's own (plain-text) 404 for an unfinished one.
  { name: "tus: download staff's upload", method: "GET", path: (i) => i.staffUpload, body: () => ({ headers: TUS }),
    plainFor: ["staff"], expect: ALL(404) },

  // --- Measurements.
  // The list is filtered per caller (see "the measurement list shows each caller…" below): an
  // objective the caller cannot see, or another facility's, matches nothing rather than a 404.
  { name: "list measurements", method: "GET", path: () => "/api/v1/measurements", expect: ALL(200) },
  { name: "list measurements of the other facility's objective", method: "GET",
    path: (i) => `/api/v1/measurements?objectiveId=${i.otherObjective}&limit=200`, expect: ALL(200) },
  { name: "list measurements with a cursor it did not give out", method: "GET",
    path: () => "/api/v1/measurements?before=2024-02-30T10:00:00.000000Z_2024-03-01T10:00:00.000000Z_00000000-0000-4000-8000-000000000000",
    expect: ALL(400) },
  { name: "list measurements, 201 per page", method: "GET", path: () => "/api/v1/measurements?limit=201", expect: ALL(400) },
  { name: "staff's sample measurement", method: "GET", path: (i) => `/api/v1/measurements/${i.staffSample}`,
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 404, "other facility": 404 } },
  { name: "researcher's sample measurement", method: "GET", path: (i) => `/api/v1/measurements/${i.researcherSample}`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  { name: "beads of the researcher's measurement", method: "GET", path: (i) => `/api/v1/measurements/${i.researcherSample}/beads`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  { name: "one bead's voxels of the researcher's measurement", method: "GET",
    path: (i) => `/api/v1/measurements/${i.researcherSample}/beads/${i.firstBead}`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  { name: "summary export of the researcher's measurement", method: "GET", path: (i) => `/api/v1/measurements/${i.researcherSample}/summary`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  { name: "summary export of staff's sample measurement", method: "GET", path: (i) => `/api/v1/measurements/${i.staffSample}/summary`,
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 404, "other facility": 404 } },
  { name: "averaged PSF of the researcher's measurement", method: "GET",
    path: (i) => `/api/v1/measurements/${i.researcherSample}/averaged-psf.ome.tif`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  { name: "averaged PSF of staff's sample measurement", method: "GET",
    path: (i) => `/api/v1/measurements/${i.staffSample}/averaged-psf.ome.tif`,
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 404, "other facility": 404 } },
  { name: "sample measurement on the researcher's stack", method: "POST", path: () => "/api/v1/measurements",
    body: (i) => jsonBody(sampleMeasurement(i.researcherStack, i.oil)),
    expect: { admin: 202, staff: 202, researcher: 202, engineer: 403, "other facility": 404 } },
  // A researcher works on their own stacks only; someone else's is "not found" to them.
  { name: "sample measurement on staff's stack", method: "POST", path: () => "/api/v1/measurements",
    body: (i) => jsonBody(sampleMeasurement(i.staffStack, i.oil)),
    expect: { admin: 202, staff: 202, researcher: 404, engineer: 403, "other facility": 404 } },
  // Routine and service checks: the role and the rows are checked before the body's channel
  // (the stack has one), so an allowed caller gets 422 and nothing is queued.
  { name: "routine check (channel 5 of a 1-channel stack)", method: "POST", path: () => "/api/v1/measurements",
    body: (i) => jsonBody({ ...sampleMeasurement(i.engineerStack, i.silicone, { channel: 5 }), purpose: "routine" }),
    expect: { admin: 422, staff: 422, researcher: 403, engineer: 403, "other facility": 404 } },
  { name: "pre-service check on the visit's lens (channel 5)", method: "POST", path: () => "/api/v1/measurements",
    body: (i) => jsonBody({ ...sampleMeasurement(i.engineerStack, i.silicone, { channel: 5 }), purpose: "pre-service" }),
    expect: { admin: 422, staff: 422, researcher: 403, engineer: 422, "other facility": 404 } },
  { name: "pre-service check on a lens outside the visit (channel 5)", method: "POST", path: () => "/api/v1/measurements",
    body: (i) => jsonBody({ ...sampleMeasurement(i.engineerStack, i.oil, { channel: 5 }), purpose: "pre-service" }),
    expect: { admin: 422, staff: 422, researcher: 403, engineer: 404, "other facility": 404 } },
  // A visit named in the body is looked up like any row: researchers see none, and another
  // facility's visit is unknown, even on the caller's own stack and objective.
  { name: "sample measurement naming the demo visit (channel 5)", method: "POST", path: () => "/api/v1/measurements",
    body: (i) => jsonBody(sampleMeasurement(i.researcherStack, i.oil, { channel: 5, serviceVisitId: i.visit })),
    expect: { admin: 422, staff: 422, researcher: 404, engineer: 403, "other facility": 404 } },
  { name: "sample measurement on the other facility's own stack naming our visit (channel 5)", method: "POST", path: () => "/api/v1/measurements",
    body: (i) => jsonBody(sampleMeasurement(i.otherStack, i.otherObjective, { channel: 5, serviceVisitId: i.visit })),
    expect: { admin: 404, staff: 404, researcher: 404, engineer: 403, "other facility": 404 } },
  { name: "cancel the researcher's queued sample measurement", method: "POST",
    path: (i, fresh) => `/api/v1/measurements/${fresh ?? i.queuedSample}/cancel`,
    fresh: () => insertMeasurement(ids.researcherSample, { status: "queued", purpose: "sample", objectiveId: ids.oil, stackId: ids.researcherStack, createdBy: "researcher" }),
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  { name: "cancel a queued routine check on the visit's lens", method: "POST",
    path: (i, fresh) => `/api/v1/measurements/${fresh ?? i.queuedRoutineOnVisit}/cancel`,
    fresh: () => insertMeasurement(ids.routineCheck, { status: "queued", purpose: "routine", objectiveId: ids.silicone, stackId: ids.staffStack, createdBy: "staff" }),
    expect: { admin: 200, staff: 200, researcher: 403, engineer: 403, "other facility": 404 } },
  { name: "cancel a queued pre-service check on the visit's lens", method: "POST",
    path: (i, fresh) => `/api/v1/measurements/${fresh ?? i.queuedServiceOnVisit}/cancel`,
    fresh: () => insertMeasurement(ids.routineCheck, { status: "queued", purpose: "pre-service", objectiveId: ids.silicone, stackId: ids.staffStack, createdBy: "staff" }),
    expect: { admin: 200, staff: 200, researcher: 403, engineer: 200, "other facility": 404 } },
  { name: "cancel a finished measurement", method: "POST", path: (i) => `/api/v1/measurements/${i.researcherSample}/cancel`,
    expect: { admin: 409, staff: 409, researcher: 409, engineer: 404, "other facility": 404 } },
  { name: "re-run the researcher's sample measurement", method: "POST",
    path: (i, fresh) => `/api/v1/measurements/${fresh ?? i.cancelledSample}/rerun`, body: () => jsonBody({ thresholdK: 6 }),
    fresh: () => insertMeasurement(ids.researcherSample, { status: "cancelled", purpose: "sample", objectiveId: ids.oil, stackId: ids.researcherStack, createdBy: "researcher" }),
    expect: { admin: 202, staff: 202, researcher: 202, engineer: 404, "other facility": 404 } },
  { name: "re-run a routine check", method: "POST",
    path: (i, fresh) => `/api/v1/measurements/${fresh ?? i.cancelledRoutine}/rerun`, body: () => jsonBody({ thresholdK: 6 }),
    fresh: () => insertMeasurement(ids.routineCheck, { status: "cancelled", purpose: "routine", objectiveId: ids.objective, stackId: ids.staffStack, createdBy: "staff" }),
    expect: { admin: 202, staff: 202, researcher: 403, engineer: 404, "other facility": 404 } },
  { name: "re-run while queued", method: "POST", path: (i) => `/api/v1/measurements/${i.queuedSample2}/rerun`,
    body: () => jsonBody({}), expect: { admin: 409, staff: 409, researcher: 409, engineer: 404, "other facility": 404 } },
  // The body is checked before the row: the same 400 for every caller and every id.
  { name: "re-run with an invalid body", method: "POST", path: (i) => `/api/v1/measurements/${i.cancelledSample}/rerun`,
    body: () => jsonBody({ thresholdK: 1 }), expect: ALL(400) },
  // Marking a baseline is "baselines.manage" (admin, staff), refused by role before any lookup.
  // Marking it again is allowed (a new epoch starts again), so both allowed cells can share the row.
  { name: "mark a finished routine check as baseline", method: "POST", path: (i) => `/api/v1/measurements/${i.routineCheck}/baseline`,
    expect: { admin: 200, staff: 200, researcher: 403, engineer: 403, "other facility": 404 } },
  { name: "mark a sample measurement as baseline", method: "POST", path: (i) => `/api/v1/measurements/${i.researcherSample}/baseline`,
    expect: { admin: 422, staff: 422, researcher: 403, engineer: 403, "other facility": 404 } },

  // --- Service visits: researchers have no visit rights; an engineer sees their own visits only.
  { name: "the engineer's service visit", method: "GET", path: (i) => `/api/v1/service-visits/${i.visit}`,
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 200, "other facility": 404 } },
  { name: "the engineer's visit report as PDF", method: "GET", path: (i) => `/api/v1/service-visits/${i.visit}/report.pdf`,
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 200, "other facility": 404 } },
  // Mailing the report is instruments.manage (admins, staff); the engineer can see the visit, so 403.
  { name: "mail the engineer's visit report", method: "POST", path: (i) => `/api/v1/service-visits/${i.visit}/report/email`,
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 403, "other facility": 404 } },
  { name: "sign off the engineer's visit", method: "POST",
    path: (i, fresh) => `/api/v1/service-visits/${fresh ?? i.visit}/sign-off`,
    body: () => jsonBody({ report: "Realigned the laser; as-left check within limits. (e2e access check)" }),
    fresh: () => visitAs(true),
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 200, "other facility": 404 } },
  // DESIGN.md §7: the engineer's service reports are for the visit window; the facility can sign off later.
  { name: "sign off the engineer's visit that ended yesterday", method: "POST",
    path: (i, fresh) => `/api/v1/service-visits/${fresh ?? i.pastVisit}/sign-off`,
    body: () => jsonBody({ report: "Signed off after the visit. (e2e access check)" }),
    fresh: () => visitAs(true, "past"),
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 403, "other facility": 404 } },
  // Reading stays open to the engineer: it is their own visit and report.
  { name: "the engineer's visit that ended yesterday", method: "GET", path: (i) => `/api/v1/service-visits/${i.pastVisit}`,
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 200, "other facility": 404 } },
  { name: "sign off a visit without the engineer", method: "POST",
    path: (i, fresh) => `/api/v1/service-visits/${fresh ?? i.signedVisit}/sign-off`,
    body: () => jsonBody({ report: "Signed off by the facility. (e2e access check)" }),
    fresh: () => visitAs(false),
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 404, "other facility": 404 } },
  { name: "sign off a visit already signed off", method: "POST", path: (i) => `/api/v1/service-visits/${i.signedVisit}/sign-off`,
    body: () => jsonBody({ report: "Again. (e2e access check)" }),
    expect: { admin: 409, staff: 409, researcher: 404, engineer: 404, "other facility": 404 } },
  { name: "sign off with an empty report", method: "POST", path: (i) => `/api/v1/service-visits/${i.visit}/sign-off`,
    body: () => jsonBody({ report: "  " }), expect: ALL(400) },
  // The other facility's admin may plan visits, but not to our instruments (refused like an unknown id).
  { name: "plan a service visit", method: "POST", path: () => "/api/v1/service-visits",
    body: (i) => jsonBody({ title: "Access check visit (e2e)", instrumentIds: [i.confocal], startsAt: "2099-01-04", endsAt: "2099-01-05" }),
    expect: { admin: 201, staff: 201, researcher: 403, engineer: 403, "other facility": 422 } },
];

const expectedStatus = (route: Route, caller: Caller): number =>
  route.public ?? (caller === "anonymous" || caller === "expired" ? 401 : route.expect![caller]);

const CELLS = ROUTES.flatMap((route) =>
  CALLERS.map((caller) => ({
    label: `${route.method} ${route.name}`,
    route,
    caller,
    status: expectedStatus(route, caller),
  })),
);

// ---------------------------------------------------------------------------------------------
// Pages

type Outcome = 200 | 403 | 404 | "sign-in" | "sign-in (expired)" | "dashboard";

interface PageRow {
  name: string;
  path: (ids: Ids) => string;
  /** Outcome per member caller; anonymous → sign-in, expired → sign-in (expired) unless `public`. */
  expect?: Record<Member, Outcome>;
  public?: Outcome;
}

const EVERYONE = (o: Outcome): Record<Member, Outcome> => ({
  admin: o,
  staff: o,
  researcher: o,
  engineer: o,
  "other facility": o,
});

// prettier-ignore
const PAGES: PageRow[] = [
  { name: "home", path: () => "/", expect: EVERYONE("dashboard") },
  { name: "dashboard", path: () => "/dashboard", expect: EVERYONE(200) },
  { name: "instruments", path: () => "/instruments", expect: EVERYONE(200) },
  { name: "objective outside the engineer's visit", path: (i) => `/instruments/objectives/${i.oil}`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  { name: "objective on the engineer's visit", path: (i) => `/instruments/objectives/${i.silicone}`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 200, "other facility": 404 } },
  { name: "objective with a malformed id", path: () => "/instruments/objectives/not-a-uuid", expect: EVERYONE(404) },
  { name: "staff's sample measurement", path: (i) => `/measurements/${i.staffSample}`,
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 404, "other facility": 404 } },
  { name: "researcher's sample measurement", path: (i) => `/measurements/${i.researcherSample}`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  // Every role has at least one purpose it may measure (the engineer: service checks).
  { name: "new measurement", path: () => "/measurements/new", expect: EVERYONE(200) },
  { name: "new measurement prefilled with staff's stack", path: (i) => `/measurements/new?stack=${i.staffStack}`, expect: EVERYONE(200) },
  { name: "planner", path: () => "/planner", expect: EVERYONE(200) },
  { name: "planner print view", path: (i) => `/planner/print?objectives=${i.oil}`, expect: EVERYONE(200) },
  { name: "service visits", path: () => "/service-visits",
    expect: { admin: 200, staff: 200, researcher: 403, engineer: 200, "other facility": 200 } },
  { name: "the engineer's service visit", path: (i) => `/service-visits/${i.visit}`,
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 200, "other facility": 404 } },
  { name: "a visit without the engineer", path: (i) => `/service-visits/${i.signedVisit}`,
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 404, "other facility": 404 } },
  { name: "settings", path: () => "/settings",
    expect: { admin: 200, staff: 200, researcher: 403, engineer: 403, "other facility": 200 } },
  { name: "audit log", path: () => "/settings/audit",
    expect: { admin: 200, staff: 403, researcher: 403, engineer: 403, "other facility": 200 } },
  { name: "captured mail", path: () => "/settings/mail",
    expect: { admin: 200, staff: 403, researcher: 403, engineer: 403, "other facility": 200 } },
  { name: "stacks", path: () => "/stacks", expect: EVERYONE(200) },
  { name: "staff's stack", path: (i) => `/stacks/${i.staffStack}`,
    expect: { admin: 200, staff: 200, researcher: 404, engineer: 404, "other facility": 404 } },
  { name: "researcher's stack", path: (i) => `/stacks/${i.researcherStack}`,
    expect: { admin: 200, staff: 200, researcher: 200, engineer: 404, "other facility": 404 } },
  // Public pages: the token in the link is the credential; an unknown one is explained on the page.
  { name: "sign-in", path: () => "/sign-in", public: 200 },
  { name: "forgot password", path: () => "/forgot-password", public: 200 },
  { name: "invitation with an unknown token", path: () => `/invite/${"x".repeat(43)}`, public: 200 },
  { name: "password reset with an unknown token", path: () => `/reset-password/${"x".repeat(43)}`, public: 200 },
  { name: "unsubscribe with a forged token", path: () => "/unsubscribe/not-a-token", public: 200 },
];

const PAGE_CELLS = PAGES.flatMap((page) =>
  CALLERS.map((caller) => ({
    name: page.name,
    page,
    caller,
    outcome: (page.public ??
      (caller === "anonymous"
        ? "sign-in"
        : caller === "expired"
          ? "sign-in (expired)"
          : page.expect![caller])) as Outcome,
  })),
);

function outcomeOf(r: Result): Outcome | number | string {
  if (r.status === 307 || r.status === 302 || r.status === 303) {
    const to = new URL(r.headers.get("location") ?? "", BASE_URL);
    if (to.pathname === "/sign-in")
      return to.searchParams.get("reason") === "expired" ? "sign-in (expired)" : "sign-in";
    if (to.pathname === "/dashboard") return "dashboard";
    return `redirect to ${to.pathname}${to.search}`;
  }
  return r.status;
}

// ---------------------------------------------------------------------------------------------

beforeAll(async () => {
  const db = getDb();
  for (const role of ROLES) tokens[role] = await tokenFor(`${role}@larkspur.example`);
  other = await makeOtherFacility();
  tokens["other facility"] = other.token;
  const [staffUser] = await db.select().from(users).where(eq(users.email, "staff@larkspur.example"));
  const [engineerUser] = await db.select().from(users).where(eq(users.email, "engineer@larkspur.example"));
  ids.engineerUser = engineerUser!.id;
  // A session cookie signed with the app's key whose lifetime is over: the API must say
  // `session_expired`, the pages must send to sign-in with reason=expired.
  expiredCookie = await sessionCookieFor(staffUser!.id, -3600);

  ids.oil = (await demoObjective("63× / 1.40 oil")).id;
  const silicone = await demoObjective("60× / 1.35 silicone");
  ids.silicone = silicone.id;
  ids.spinningDisk = silicone.instrumentId!;
  ids.confocal = (await demoInstrument("Confocal North (room 2.14)")).id;
  ids.visit = await demoEngineerVisitId();
  const created = await call(
    "staff",
    "POST",
    "/api/v1/objectives",
    jsonBody({ name: "20× / 0.50 air (e2e access matrix)", magnification: 20, na: 0.5, immersion: "air" }),
  );
  ids.objective = await ok(created, 201, (r) => r.json.id as string);
  createdObjectives.push({ id: ids.objective, caller: "staff" });

  ids.staffStack = await uploadAs("staff", true);
  ids.researcherStack = await uploadAs("researcher", true);
  ids.engineerStack = await uploadAs("engineer");
  ids.unusedStaffStack = await uploadAs("staff");
  ids.unusedResearcherStack = await uploadAs("researcher");
  const measure = async (caller: Member, body: unknown) =>
    ok(await call(caller, "POST", "/api/v1/measurements", jsonBody(body)), 202, (r) => r.json.id as string);
  ids.staffSample = await measure("staff", sampleMeasurement(ids.staffStack, ids.oil));
  ids.researcherSample = await measure("researcher", sampleMeasurement(ids.researcherStack, ids.oil));
  ids.routineCheck = await measure("staff", {
    ...sampleMeasurement(ids.staffStack, ids.objective),
    purpose: "routine",
    sampleRi: undefined,
  });
  ids.signedVisit = await visitAs(false);
  const signed = await call(
    "staff",
    "POST",
    `/api/v1/service-visits/${ids.signedVisit}/sign-off`,
    jsonBody({ report: "Signed off before the matrix runs. (e2e access check)" }),
  );
  expect(signed.status, signed.text).toBe(200);
  ids.pastVisit = await visitAs(true, "past");
  ids.staffUpload = await tusUploadAs("staff");
  ids.otherStack = await uploadAs("other facility");
  const otherObjective = await call(
    "other facility",
    "POST",
    "/api/v1/objectives",
    jsonBody({ name: "40× / 0.95 air (e2e access matrix)", magnification: 40, na: 0.95, immersion: "air" }),
  );
  ids.otherObjective = await ok(otherObjective, 201, (r) => r.json.id as string);
  createdObjectives.push({ id: ids.otherObjective, caller: "other facility" });
  // Sessions for the page matrix, signed in the way the browser's form does (Auth.js credentials).
  for (const role of ROLES) {
    const c = demoCredentials(role);
    cookies[role] = await signIn(c.email, c.password);
  }
  cookies["other facility"] = await signIn(other.email, other.password);

  for (const id of [ids.staffSample, ids.researcherSample, ids.routineCheck]) await waitDone(id);
  const beads = await db
    .select({ index: beadResults.beadIndex })
    .from(beadResults)
    .where(eq(beadResults.measurementId, ids.researcherSample))
    .orderBy(beadResults.beadIndex)
    .limit(1);
  expect(beads.length, "the researcher's measurement found no bead").toBe(1);
  ids.firstBead = beads[0]!.index;

  const q = (templateId: string, v: Parameters<typeof insertMeasurement>[1]) =>
    insertMeasurement(templateId, v);
  const sample = {
    purpose: "sample",
    objectiveId: ids.oil,
    stackId: ids.researcherStack,
    createdBy: "researcher",
  } as const;
  ids.queuedSample = await q(ids.researcherSample, { ...sample, status: "queued" });
  ids.queuedSample2 = await q(ids.researcherSample, { ...sample, status: "queued" });
  ids.cancelledSample = await q(ids.researcherSample, { ...sample, status: "cancelled" });
  const onVisit = {
    objectiveId: ids.silicone,
    stackId: ids.staffStack,
    createdBy: "staff",
    status: "queued",
  } as const;
  ids.queuedRoutineOnVisit = await q(ids.routineCheck, { ...onVisit, purpose: "routine" });
  ids.queuedServiceOnVisit = await q(ids.routineCheck, { ...onVisit, purpose: "pre-service" });
  ids.cancelledRoutine = await q(ids.routineCheck, {
    purpose: "routine",
    objectiveId: ids.objective,
    stackId: ids.staffStack,
    createdBy: "staff",
    status: "cancelled",
  });
});

afterAll(async () => {
  // Retired, not deleted: the rows stay (with their audit entries) but leave the planner and dashboard.
  for (const o of createdObjectives) {
    await call(o.caller, "PATCH", `/api/v1/objectives/${o.id}`, jsonBody({ retired: true }));
  }
  for (const u of createdUploads) await call(u.caller, "DELETE", u.path, { headers: TUS });
  // Inserted rows a refused cell left queued (they have no job): nothing should look pending.
  if (insertedMeasurements.length) {
    await getDb()
      .update(measurements)
      .set({ status: "cancelled", stage: "cancelled", finishedAt: new Date() })
      .where(and(inArray(measurements.id, insertedMeasurements), eq(measurements.status, "queued")));
  }
  await closeDb();
});

/** The URLs a route folder answers: `[id]` one segment, `[...x]` one or more, `[[...x]]` none or more. */
function routePattern(dir: string): RegExp {
  const source = dir
    .split("/")
    .map((seg) => {
      if (/^\[\[\.\.\.[^\]]+\]\]$/.test(seg)) return "(?:/.+)?";
      if (/^\[\.\.\.[^\]]+\]$/.test(seg)) return "/.+";
      if (/^\[[^\]]+\]$/.test(seg)) return "/[^/]+";
      return `/${seg.replace(/[.*+?^${}()|[\]\\]/g, "\\$&")}`;
    })
    .join("");
  return new RegExp(`^${source}$`);
}

describe("access matrix over HTTP (route handlers)", () => {
  // Plain titles (it.each would shorten long names, and cells must stay tellable apart).
  for (const { label, route, caller, status } of CELLS) {
    it(`${label} as ${caller} → ${status}`, async () => {
      const fresh =
        route.fresh && status >= 200 && status < 300 && caller !== "anonymous" && caller !== "expired"
          ? await route.fresh(caller)
          : undefined;
      const r = await call(caller, route.method, route.path(ids, fresh), route.body?.(ids) ?? {});
      expect(r.status, r.text.slice(0, 300)).toBe(status);
      if (status >= 200 && status < 300) route.after?.(caller, r);
      if (route.method === "HEAD" || route.public !== undefined || route.plainFor?.includes(caller)) return;
      if (status === 401) {
        expect(r.json.error?.code).toBe(caller === "expired" ? "session_expired" : "unauthenticated");
      }
      if (status === 404 || status === 403) {
        // The error body is the documented JSON shape and says nothing about the other facility.
        expect(r.json.error?.code).toBe(status === 404 ? "not_found" : "forbidden");
        expect(r.text).not.toContain(other.facilityId);
      }
    });
  }

  it("the measurement list shows each caller exactly the measurements they may open", async () => {
    const rows = [
      ["staff's sample", ids.staffSample],
      ["researcher's sample", ids.researcherSample],
      ["routine check", ids.routineCheck],
      ["queued routine on the visit's lens", ids.queuedRoutineOnVisit],
      ["queued pre-service on the visit's lens", ids.queuedServiceOnVisit],
    ] as const;
    const db = getDb();
    const found = await db
      .select({
        id: measurements.id,
        objectiveId: measurements.objectiveId,
        purpose: measurements.purpose,
        status: measurements.status,
      })
      .from(measurements)
      .where(
        inArray(
          measurements.id,
          rows.map(([, id]) => id),
        ),
      );
    const filterOf = new Map(found.map((m) => [m.id, m]));
    const seen: string[] = [];
    for (const caller of ["admin", "staff", "researcher", "engineer", "other facility"] as const) {
      for (const [label, id] of rows) {
        const opens = (await call(caller, "GET", `/api/v1/measurements/${id}`)).status === 200;
        // Narrowed by the row's own objective, purpose and status so a few pages reach it on a
        // server with a long history; walked with `next` until it shows or the list ends.
        const m = filterOf.get(id)!;
        let url = `/api/v1/measurements?objectiveId=${m.objectiveId}&purpose=${m.purpose}&status=${m.status}&limit=200`;
        let listed = false;
        for (let page = 0; page < 50 && !listed; page++) {
          const r = await call(caller, "GET", url);
          expect(r.status, r.text.slice(0, 300)).toBe(200);
          const body = r.json as { measurements: Array<{ id: string }>; next: string | null };
          listed = body.measurements.some((x) => x.id === id);
          if (!body.next) break;
          url = `/api/v1/measurements?objectiveId=${m.objectiveId}&purpose=${m.purpose}&status=${m.status}&limit=200&before=${encodeURIComponent(body.next)}`;
        }
        expect(listed, `${label} as ${caller}: opens ${opens}, listed ${listed}`).toBe(opens);
        if (listed) seen.push(`${caller}: ${label}`);
      }
    }
    // The five rows sit where the roles differ, so the check above compared both answers.
    expect(seen).toContain("researcher: researcher's sample");
    expect(seen).not.toContain("researcher: staff's sample");
    expect(seen).toContain("engineer: queued pre-service on the visit's lens");
    expect(seen).not.toContain("engineer: researcher's sample");
    expect(seen.filter((s) => s.startsWith("other facility"))).toEqual([]);
  });

  it("the expired cookie is refused for its age, not its signature: the same key with time left works", async () => {
    const [staffUser] = await getDb().select().from(users).where(eq(users.email, "staff@larkspur.example"));
    const live = await sessionCookieFor(staffUser!.id, 600);
    const r = await fetch(`${BASE_URL}/api/v1/objectives`, { headers: { Cookie: live } });
    expect(r.status).toBe(200);
  });

  it("an engineer with no current visit may not upload (stacks.upload is 'assigned')", async () => {
    const db = getDb();
    const [demoEngineer] = await db.select().from(users).where(eq(users.id, ids.engineerUser));
    const [m] = await db.select().from(memberships).where(eq(memberships.userId, demoEngineer!.id));
    const [u] = await db
      .insert(users)
      .values({
        email: `engineer-${randomUUID().slice(0, 8)}@larkspur.example`,
        name: "Visiting engineer (e2e)",
      })
      .returning();
    await db.insert(memberships).values({ facilityId: m!.facilityId, userId: u!.id, role: "engineer" });
    const { token } = await createApiToken(
      db,
      { userId: u!.id, facilityId: m!.facilityId, role: "engineer", via: "token" },
      { name: "e2e engineer without a visit" },
    );
    const auth = { Authorization: `Bearer ${token}` };
    const direct = await fetch(`${BASE_URL}/api/v1/stacks`, {
      method: "POST",
      headers: auth,
      body: tiffForm().body,
    });
    expect(direct.status).toBe(403);
    const tus = await fetch(`${BASE_URL}/api/v1/uploads`, {
      method: "POST",
      headers: { ...auth, ...TUS, "Upload-Length": "1000" },
    });
    expect(tus.status).toBe(403);
    expect(((await tus.json()) as { error: { code: string } }).error.code).toBe("forbidden");
    // The same person may still read the lists (empty for them): only uploading needs the visit.
    expect((await fetch(`${BASE_URL}/api/v1/stacks`, { headers: auth })).status).toBe(200);
  });

  it("covers every method every route handler exports", async () => {
    const { readdirSync, readFileSync } = await import("node:fs");
    const path = await import("node:path");
    const root = path.resolve("src/app/api");
    const files = (readdirSync(root, { recursive: true }) as string[]).filter((f) => f.endsWith("route.ts"));
    const exported: string[] = [];
    for (const f of files) {
      const src = readFileSync(path.join(root, f), "utf8");
      const methods = new Set<string>();
      for (const m of src.matchAll(/export const (GET|POST|PATCH|PUT|DELETE|HEAD|OPTIONS)\b/g))
        methods.add(m[1]!);
      for (const m of src.matchAll(/export const \{([^}]*)\}/g))
        for (const name of m[1]!.split(",")) methods.add(name.trim());
      const dir = path.dirname(f).split(path.sep).join("/");
      for (const method of methods) exported.push(`${method} /api/${dir}`);
    }
    // Each tested URL, mapped back onto its route file's folder pattern.
    const tested = new Set(
      ROUTES.map((r) => {
        const url = new URL(r.path(ids), BASE_URL).pathname.replace(/^\/api/, "");
        const pattern = files
          .map((f) => path.dirname(f).split(path.sep).join("/"))
          .find((dir) => routePattern(dir).test(url));
        return `${r.method} /api/${pattern ?? `(no route file for ${url})`}`;
      }),
    );
    expect(exported.filter((e) => !tested.has(e))).toEqual([]);
  });
});

describe("page matrix (server-rendered pages with a session cookie)", () => {
  for (const { name, page, caller, outcome } of PAGE_CELLS) {
    it(`${name} as ${caller} → ${outcome}`, async () => {
      const r = await call(caller, "GET", page.path(ids), {}, "session");
      expect(outcomeOf(r), `${r.status} ${r.headers.get("location") ?? ""}`).toBe(outcome);
    });
  }

  it("covers every page", async () => {
    const { readdirSync } = await import("node:fs");
    const path = await import("node:path");
    const root = path.resolve("src/app");
    const pages = (readdirSync(root, { recursive: true }) as string[])
      .filter((f) => f.endsWith("page.tsx"))
      .map(
        (f) =>
          `/${path.dirname(f).split(path.sep).join("/")}`
            .replace(/\/\([^)]+\)/g, "")
            .replace(/^\/\.$/, "/")
            .replace(/\/$/, "") || "/",
      );
    const tested = PAGES.map((p) => new URL(p.path(ids), BASE_URL).pathname);
    const missing = pages.filter(
      (pattern) => !tested.some((t) => new RegExp(`^${pattern.replace(/\[[^\]]+\]/g, "[^/]+")}$`).test(t)),
    );
    expect(missing).toEqual([]);
  });
});
