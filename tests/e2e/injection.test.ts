/**
 * Hostile text in every free-text field (issue #8, item 3). HTML/script, SQL, CSV-formula and
 * Unicode payloads, and values of exactly each field's maximum length, are written through the
 * real route handlers (API token) or, where only a server action writes the field, through the
 * form in Chromium. Each write must either store the text verbatim (read back equals input) or be
 * refused with a 4xx — never a 5xx — and every page, export, PDF and e-mail that shows the value
 * must show it as text: `window.__pwned` stays undefined, no injected element exists, the literal
 * text is there, and the browser logs no error.
 * Source for the payload classes: OWASP XSS Filter Evasion Cheat Sheet, OWASP SQL Injection
 * Prevention Cheat Sheet, OWASP "CSV Injection" (common practice).
 *
 * | #  | field (max length)                             | written through                                   | shown on (besides the API read-back)                                                                  |
 * | -- | ---------------------------------------------- | ------------------------------------------------- | ----------------------------------------------------------------------------------------------------- |
 * | 1  | instrument name (120)                          | POST /api/v1/instruments; Instruments form action | /instruments, /dashboard, /planner, /measurements/new, /service-visits(/id), engineer's /instruments, visit PDF, visit mail |
 * | 2  | instrument serial number (120)                 | same                                              | /instruments                                                                                          |
 * | 3  | instrument location (200)                      | same                                              | /instruments                                                                                          |
 * | 4  | instrument notes (2000)                        | POST /api/v1/instruments                          | (no page shows it: API read-back only)                                                                |
 * | 5  | objective name (120)                           | POST and PATCH /api/v1/objectives                 | /instruments, /dashboard, objective page, /planner (list, ranking, chart legends), /planner/print, /measurements/new, /measurements/id, /stacks/id, /service-visits/id, /settings/audit, summary JSON, visit PDF, report mail |
 * | 6  | objective correction collar (120)              | POST /api/v1/objectives                           | objective page                                                                                        |
 * | 7  | objective serial number (120)                  | POST /api/v1/objectives                           | /instruments, objective page                                                                          |
 * | 8  | logbook event note (2000)                      | POST /api/v1/objectives/:id/events                | objective page (table, chart annotation hover)                                                        |
 * | 9  | service-visit title (160)                      | POST /api/v1/service-visits                       | /service-visits, /service-visits/id, visit PDF, visit mail (subject, text, HTML), report mail         |
 * | 10 | service-visit engineer e-mail (e-mail syntax)  | POST /api/v1/service-visits                       | a member's SQL-looking address attaches them (read back); an HTML one is a 400                        |
 * | 11 | sign-off report (20000)                        | POST /api/v1/service-visits/:id/sign-off          | /service-visits/id, visit PDF                                                                         |
 * | 12 | stack file name, multipart (255)               | POST /api/v1/stacks                               | /stacks, /stacks/id, /measurements/new?stack=, objective page, /settings/audit                        |
 * | 13 | stack file name, tus metadata (255)            | POST + PATCH /api/v1/uploads                      | /stacks, /stacks/id                                                                                   |
 * | 14 | OME-XML text inside the TIFF (immersion, acquisition mode and date, a unit echoed in a warning) | POST /api/v1/stacks | /stacks/id (metadata table, warnings)                                        |
 * | 15 | measurement mediumId (80)                      | POST /api/v1/measurements                         | the 422 message                                                                                       |
 * | 16 | planner objective names (80)                   | POST /api/v1/planner                              | the JSON answer                                                                                       |
 * | 17 | planner mediumId (80)                          | POST /api/v1/planner; /planner?medium=; /planner/print?medium= | the 422 message; both pages                                                              |
 * | 18 | API token name (80)                            | Settings token form (createTokenAction)           | /settings                                                                                             |
 * | 19 | invitation e-mail (e-mail syntax)              | Settings invite form (inviteAction)               | /settings (pending list), /invite/token, the invitation mail's recipient                              |
 * | 20 | a person's name (120)                          | /invite/token form (acceptInvitationAction)       | app header, /settings, /service-visits(/id), visit PDF, password-reset mail                           |
 * | 21 | sign-in e-mail (echoed back)                   | /sign-in form (signInAction)                      | /sign-in                                                                                              |
 * | 22 | query parameters echoed or looked up by pages  | the address bar                                   | /settings/audit?action=, /planner(/print)?medium=, /measurements/new?medium=, /stacks/id?channel=, /sign-in?reason=, /forgot-password?notice=, /reset-password/token?problem= |
 * | 23 | status date (query)                            | GET /api/v1/objectives/:id/status?date=           | a 400                                                                                                 |
 *
 * The bead CSV export holds numbers and fixed reject codes only (no user text); its formula
 * neutralising is unit-tested in tests/unit/server/bead-export.test.ts, here it must stay parseable.
 * Not written here: facility names and time zones (no route or form writes them), and the mails
 * sent only by scheduled jobs or a failing check (reminder digest, weekly digest, out-of-spec
 * alert) — they use the same escapeHtml as the mails checked here.
 * Everything created is deleted again at the end (audit rows stay: they are history).
 */
import { inflateSync } from "node:zlib";
import { randomUUID } from "node:crypto";
import { readFileSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq, inArray } from "drizzle-orm";
import { PDFArray, PDFDocument, PDFName, PDFRawStream, type PDFObject } from "pdf-lib";
import type { Page } from "playwright-core";
import { closeDb, getDb } from "@/server/db/client";
import {
  apiTokens,
  instruments,
  invitations,
  measurements,
  objectives,
  serviceVisits,
  users,
} from "@/server/db/schema";
import { hashToken } from "@/server/services/actor";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";
import { writeTiff } from "../../fixtures/tiff-writer";
import { api, tokenFor, type ApiResult } from "./api-client";
import { BASE_URL, openBrowser, type Session } from "./browser";
import { signInAs } from "./pages/sign-in-page";

// ---------------------------------------------------------------------------------------------
// Payloads

const TAG = randomUUID().slice(0, 4);

/** HTML/script class: attribute break-out with a handler, a script element, a title break-out,
 * template syntax (must stay literal, not 49), a javascript: URL, entities (must not be decoded). */
const HTML = [
  `"><img src=x onerror="window.__pwned=1">`,
  `<script>window.__pwned=1</script>`,
  `</title>`,
  `{{7*7}}`,
  `javascript:alert(1)`,
  `&amp;&lt;b&gt;`,
];
/** SQL class. */
const SQL = [`'; DROP TABLE measurements; --`, ` ' OR '1'='1`];
/** Unicode oddities: right-to-left override, an emoji (a surrogate pair), a combining accent. */
const UNICODE = [`\u202Egnp.exe\u202C \u{1F9EA} e\u0301`];
/** CSV-formula class: each value starts with one of these (OWASP "CSV Injection"). */
const CSV_LEADS = [
  `=HYPERLINK("http://x.example")`,
  `+cmd|' /C calc'!A0`,
  `@SUM(1+1)`,
  `-2+3+cmd|' /C calc'!A0`,
];
const PIECES = [...HTML, ...SQL, ...UNICODE];
/** Padding up to a field's maximum (no whitespace at the end: text fields are trimmed). */
const FILLER = ` <b>\u00fc&lt;'`;

/**
 * The values one field receives: each starts with a CSV lead and the run tag, the pieces are
 * packed first-fit into as few values as `max` allows, and the last value is padded to exactly
 * `max` (the "very long" case). So every payload class reaches the field at least once.
 */
function valuesFor(max: number, pieces = PIECES, leads = CSV_LEADS, filler = FILLER): string[] {
  const left = [...pieces];
  const out: string[] = [];
  while (left.length) {
    let v = `${leads[out.length % leads.length]} ${TAG}`;
    const start = v.length;
    for (let i = 0; i < left.length;) {
      if (v.length + left[i]!.length <= max) v += left.splice(i, 1)[0];
      else i++;
    }
    if (v.length === start) throw new Error(`a piece does not fit into ${max} characters`);
    out.push(v);
  }
  let last = out.pop()!;
  while (last.length < max) last += filler;
  last = last.slice(0, max).replace(/\s$/, "x");
  out.push(last);
  return out;
}

/** The classes each field's values together must carry. */
function expectAllClasses(values: string[], pieces = PIECES) {
  const joined = values.join("\n");
  for (const p of pieces) expect(joined).toContain(p);
  for (const v of values) expect(v).toMatch(/^[=+\-@]/);
}

const VALUES = {
  name120: valuesFor(120),
  text160: valuesFor(160),
  text200: valuesFor(200),
  text2000: valuesFor(2000),
  text20000: valuesFor(20000),
  text80: valuesFor(80),
};

/** File names sent as multipart: no "/" (the server keeps the base name) and no '"' (browsers
 * and fetch send it as %22 in the Content-Disposition header, per the WHATWG form encoding). */
const FILE_PIECES = [
  `'><img src=x onerror='window.__pwned=1'>`,
  `<svg onload=window.__pwned=1>`,
  `{{7*7}}`,
  `javascript:alert(1)`,
  `&amp;&lt;b&gt;`,
  ...SQL,
  ...UNICODE,
];

// ---------------------------------------------------------------------------------------------
// Helpers

const JSON_HEADERS = { "Content-Type": "application/json" };
const post = (token: string, url: string, body: unknown) =>
  api(token, "POST", url, { headers: JSON_HEADERS, body: JSON.stringify(body) });

/** Accepted (and then returned) or refused with a 4xx that says why; never a 5xx. */
function expectStoredOrRefused(r: ApiResult, what: string): boolean {
  expect(r.status, `${what}: ${r.text.slice(0, 300)}`).toBeLessThan(500);
  if (r.status >= 400) {
    expect(r.json.error?.message, `${what}: a 4xx needs a message`).toBeTruthy();
    return false;
  }
  return true;
}

function expectStored(r: ApiResult, what: string) {
  expect(r.status, `${what}: ${r.text.slice(0, 300)}`).toBeLessThan(300);
}

function expectRefused(r: ApiResult, what: string) {
  expect(r.status, `${what}: ${r.text.slice(0, 300)}`).toBeGreaterThanOrEqual(400);
  expect(r.status, `${what}: ${r.text.slice(0, 300)}`).toBeLessThan(500);
  expect(r.json.error?.message, what).toBeTruthy();
}

const xml = (s: string) =>
  s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");

/** A small uint16 stack with bytes of its own (a duplicate would come back under its old name). */
function tinyTiff(seed: number, description?: string): Uint8Array {
  const pages = Array.from({ length: 3 }, (_, z) => {
    const data = new Uint16Array(16 * 16);
    for (let i = 0; i < data.length; i++) data[i] = (seed * 7919 + z * 104729 + i * 31) % 65521;
    return { width: 16, height: 16, dtype: "uint16" as const, data };
  });
  return writeTiff(pages, description ? { description } : {});
}

async function uploadMultipart(token: string, bytes: Uint8Array, fileName: string) {
  const form = new FormData();
  form.append("file", new Blob([bytes as BlobPart], { type: "image/tiff" }), fileName);
  return api(token, "POST", "/api/v1/stacks", { body: form });
}

async function uploadTus(token: string, bytes: Uint8Array, fileName: string) {
  const tus = { "Tus-Resumable": "1.0.0" };
  const created = await api(token, "POST", "/api/v1/uploads", {
    headers: {
      ...tus,
      "Upload-Length": String(bytes.length),
      "Upload-Metadata": `filename ${Buffer.from(fileName, "utf8").toString("base64")}`,
    },
  });
  expect(created.status, created.text).toBe(201);
  const where = new URL(created.headers.get("location")!, BASE_URL).pathname;
  return api(token, "PATCH", where, {
    headers: { ...tus, "Upload-Offset": "0", "Content-Type": "application/offset+octet-stream" },
    body: bytes as BodyInit,
  });
}

interface PageFindings {
  pwned: unknown;
  injected: string[];
  title: string;
  text: string;
  values: string[];
}

/** What a rendered page holds: injection signs, the text of its text nodes (not scripts), form values. */
async function inspect(page: Page): Promise<PageFindings> {
  return page.evaluate(() => {
    const injected: string[] = [];
    for (const el of document.querySelectorAll('img[src="x"], [onerror], [onload]'))
      injected.push(el.outerHTML.slice(0, 120));
    for (const s of document.querySelectorAll("script"))
      if (/^\s*window\.__pwned/.test(s.textContent ?? "")) injected.push(s.outerHTML.slice(0, 120));
    for (const a of document.querySelectorAll("a[href], [src], [formaction], form[action]")) {
      const raw =
        a.getAttribute("href") ??
        a.getAttribute("src") ??
        a.getAttribute("formaction") ??
        a.getAttribute("action");
      // Browsers ignore whitespace and control characters inside a URL's scheme.
      const url = [...(raw ?? "")]
        .filter((c) => c.charCodeAt(0) > 0x20)
        .join("")
        .toLowerCase();
      // React gives forms bound to a server action this placeholder action of its own.
      const reactPlaceholder = url.startsWith("javascript:thrownewerror('areactformwasunexpectedlysubmitted");
      if (url.startsWith("javascript:") && !reactPlaceholder) injected.push(a.outerHTML.slice(0, 120));
    }
    const parts: string[] = [];
    const walker = document.createTreeWalker(document.body, NodeFilter.SHOW_TEXT, {
      acceptNode: (n) =>
        n.parentElement?.closest("script, style, noscript, template")
          ? NodeFilter.FILTER_REJECT
          : NodeFilter.FILTER_ACCEPT,
    });
    while (walker.nextNode()) parts.push(walker.currentNode.nodeValue ?? "");
    const values = [...document.querySelectorAll("input, textarea")].map(
      (e) => (e as HTMLInputElement).value,
    );
    return {
      pwned: (window as unknown as { __pwned?: unknown }).__pwned,
      injected,
      title: document.title,
      text: parts.join(""),
      values,
    };
  });
}

/** The page shows each expected string as text and nothing was injected or logged as an error. */
async function expectSafePage(
  s: Session,
  what: string,
  expected: string[],
  opts: { title?: boolean; allow?: RegExp } = {},
) {
  // After a client-side navigation Next.js sets the new title a moment later.
  if (opts.title !== false)
    await s.page
      .waitForFunction(() => /Beadbench$/.test(document.title), null, { timeout: 5_000 })
      .catch(() => {});
  const f = await inspect(s.page);
  expect(f.pwned, `${what}: window.__pwned`).toBeUndefined();
  expect(f.injected, `${what}: injected elements`).toEqual([]);
  if (opts.title !== false) expect(f.title, `${what}: <title>`).toMatch(/Beadbench$/);
  // Shown as text, or as the value of a form field (e.g. a read-only e-mail field).
  for (const e of expected)
    expect(
      f.text.includes(e) || f.values.includes(e),
      `${what} shows ${JSON.stringify(e.slice(0, 80))}…`,
    ).toBe(true);
  expect(
    s.problems.filter((p) => !opts.allow?.test(p)),
    what,
  ).toEqual([]);
  s.problems.length = 0;
  return f;
}

async function visit(s: Session, url: string, ready?: string) {
  s.problems.length = 0; // what an earlier page left behind is reported by its own check
  const res = await s.page.goto(`${BASE_URL}${url}`);
  expect(res?.status(), url).toBeLessThan(400);
  if (ready) await s.page.locator(ready).first().waitFor({ timeout: 20_000 });
}

/** Every string drawn with `Tj` in the PDF (pdf-lib has no text extraction; see
 * tests/integration/service-visit-pdf.test.ts), all whitespace removed (lines wrap anywhere). */
async function pdfText(bytes: Uint8Array): Promise<string> {
  const doc = await PDFDocument.load(bytes);
  const decoder = new TextDecoder("windows-1252");
  const out: string[] = [];
  for (const page of doc.getPages()) {
    const contents = page.node.Contents() as PDFObject | undefined;
    const streams =
      contents instanceof PDFArray ? contents.asArray().map((r) => doc.context.lookup(r)) : [contents];
    for (const st of streams) {
      if (!(st instanceof PDFRawStream)) throw new Error("unexpected content stream type");
      const raw = st.dict.get(PDFName.of("Filter")) ? inflateSync(st.contents) : Buffer.from(st.contents);
      for (const m of raw.toString("latin1").matchAll(/<([0-9A-Fa-f]*)>\s*Tj/g))
        out.push(decoder.decode(Buffer.from(m[1]!, "hex")));
    }
  }
  return out.join("").replace(/\s+/g, "");
}

/** The printable-ASCII runs of a value (what a WinAnsi PDF must reproduce exactly), spaces removed. */
const asciiRuns = (v: string) =>
  v
    .replace(/\s+/g, "")
    .split(/[^\x21-\x7e]+/)
    .filter((r) => r.length >= 6);

const OUTBOX = path.resolve(process.env.DATA_DIR ?? ".data", "outbox.jsonl");
// Under `npm start` mail travels over SMTP to the local capture server, which writes here instead.
const CAPTURE = path.resolve(".data", "mail-capture.jsonl");

interface Mail {
  to: string[] | string;
  subject: string;
  text: string | null;
  html: string | null;
}

/** The newest message to `email` whose subject matches, waiting briefly for it to be written. */
async function mailTo(email: string, subject: RegExp = /./): Promise<Mail> {
  for (let i = 0; i < 75; i++) {
    const lines: string[] = [];
    for (const file of [OUTBOX, CAPTURE]) {
      try {
        lines.push(...readFileSync(file, "utf8").split("\n"));
      } catch {
        /* not written yet */
      }
    }
    const found = lines
      .filter((l) => l.trim().startsWith("{"))
      .map((l) => JSON.parse(l) as Mail)
      .filter((m) => (Array.isArray(m.to) ? m.to : [m.to]).includes(email) && subject.test(m.subject));
    if (found.length) return found[found.length - 1]!;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`no mail to ${email} matching ${subject} in ${OUTBOX} or ${CAPTURE}`);
}

/** A mail's HTML part rendered in Chromium: no script ran, nothing injected, the values read as text. */
async function expectSafeMailHtml(s: Session, mail: Mail, expected: string[]) {
  expect(mail.html, mail.subject).toBeTruthy();
  const p = await s.context.newPage();
  try {
    await p.setContent(mail.html!, { waitUntil: "load" });
    const f = await inspect(p);
    expect(f.pwned, `${mail.subject}: window.__pwned`).toBeUndefined();
    expect(f.injected, `${mail.subject}: injected elements`).toEqual([]);
    for (const e of expected) expect(f.text, mail.subject).toContain(e);
  } finally {
    await p.close();
  }
  for (const e of expected) expect(mail.text ?? "", mail.subject).toContain(e);
}

// ---------------------------------------------------------------------------------------------
// State shared by the steps (each step needs the rows the earlier ones wrote)

let admin: string;
let s: Session;
const created = {
  instruments: [] as Array<{
    id: string;
    name: string;
    serialNumber: string;
    location: string;
    notes: string;
  }>,
  objectives: [] as Array<{ id: string; name: string; correctionCollar: string; serialNumber: string }>,
  objectiveFirstNames: [] as string[],
  eventNote: "",
  stacks: [] as string[],
  multipartStack: { id: "", fileName: "" },
  tusStack: { id: "", fileName: "" },
  omeStack: { id: "", values: [] as string[], warningUnit: "" },
  measurementId: "",
  visits: [] as Array<{ id: string; title: string }>,
  report: "",
  tokenNames: [] as string[],
  people: [] as Array<{ email: string; name: string; password: string; userId?: string }>,
  pendingEmail: "",
  uiInstrumentName: "",
  resetLink: "",
};

beforeAll(async () => {
  admin = await tokenFor("admin@larkspur.example");
  s = await openBrowser();
});

afterAll(async () => {
  await s?.close();
  const db = getDb();
  try {
    // Delete what this run created, children first (audit rows stay: they are history).
    if (created.measurementId)
      await db.delete(measurements).where(eq(measurements.id, created.measurementId));
    for (const id of created.stacks) await api(admin, "DELETE", `/api/v1/stacks/${id}`);
    const visitIds = created.visits.map((v) => v.id);
    if (visitIds.length) await db.delete(serviceVisits).where(inArray(serviceVisits.id, visitIds));
    const objectiveIds = created.objectives.map((o) => o.id);
    if (objectiveIds.length) await db.delete(objectives).where(inArray(objectives.id, objectiveIds));
    const instrumentNames = [...created.instruments.map((i) => i.name), created.uiInstrumentName].filter(
      Boolean,
    );
    if (instrumentNames.length)
      await db.delete(instruments).where(inArray(instruments.name, instrumentNames));
    const emails = [...created.people.map((p) => p.email), created.pendingEmail].filter(Boolean);
    if (emails.length) {
      await db.delete(invitations).where(inArray(invitations.email, emails));
      await db.delete(users).where(inArray(users.email, emails));
    }
    if (admin) await db.delete(apiTokens).where(eq(apiTokens.tokenHash, hashToken(admin)));
    if (created.tokenNames.length)
      await db.delete(apiTokens).where(inArray(apiTokens.name, created.tokenNames));
  } finally {
    await closeDb();
  }
});

// ---------------------------------------------------------------------------------------------

describe("hostile text through the API", () => {
  it("the payload sets reach every field with every class", () => {
    for (const values of Object.values(VALUES)) expectAllClasses(values);
    expectAllClasses(valuesFor(251, FILE_PIECES, [`=HYPERLINK('x.example')`]), FILE_PIECES);
    expect(VALUES.name120.every((v) => v.length <= 120)).toBe(true);
    expect(VALUES.name120.at(-1)!.length).toBe(120);
    expect(VALUES.text20000.at(-1)!.length).toBe(20000);
  });

  it("instruments, objectives and logbook notes are stored verbatim; NUL and over-long text are a 4xx", async () => {
    const names = VALUES.name120;
    for (let i = 0; i < names.length; i++) {
      const body = {
        name: names[i]!,
        modality: "widefield",
        serialNumber: VALUES.name120[(i + 1) % names.length]!,
        location: VALUES.text200[i % VALUES.text200.length]!,
        notes: VALUES.text2000[0]!,
      };
      const r = await post(admin, "/api/v1/instruments", body);
      expectStored(r, "instrument");
      created.instruments.push({ id: r.json.id as string, ...body });
    }
    const listed = (await api(admin, "GET", "/api/v1/instruments")).json.instruments as Array<
      Record<string, unknown>
    >;
    for (const i of created.instruments) {
      const row = listed.find((x) => x.id === i.id)!;
      expect(row.name).toBe(i.name);
      expect(row.serialNumber).toBe(i.serialNumber);
      expect(row.location).toBe(i.location);
      expect(row.notes).toBe(i.notes);
    }

    for (let i = 0; i < names.length; i++) {
      const first = `${VALUES.name120[(i + 1) % names.length]!.slice(0, 100)} (before)`;
      const body = {
        instrumentId: created.instruments[i]!.id,
        name: first,
        magnification: 63,
        na: 1.4,
        immersion: "oil",
        correctionCollar: names[(i + 1) % names.length]!,
        serialNumber: names[i]!,
      };
      const r = await post(admin, "/api/v1/objectives", body);
      expectStored(r, "objective");
      const id = r.json.id as string;
      // Renamed, so the audit log holds hostile text before and after.
      const patched = await api(admin, "PATCH", `/api/v1/objectives/${id}`, {
        headers: JSON_HEADERS,
        body: JSON.stringify({ name: names[i] }),
      });
      expectStored(patched, "objective rename");
      created.objectives.push({
        id,
        name: names[i]!,
        correctionCollar: body.correctionCollar,
        serialNumber: names[i]!,
      });
      created.objectiveFirstNames.push(first);
      const back = (await api(admin, "GET", `/api/v1/objectives/${id}`)).json;
      expect(back.name).toBe(names[i]);
      expect(back.correctionCollar).toBe(body.correctionCollar);
      expect(back.serialNumber).toBe(names[i]);
    }

    created.eventNote = VALUES.text2000[0]!;
    const o0 = created.objectives[0]!.id;
    const ev = await post(admin, `/api/v1/objectives/${o0}/events`, {
      kind: "note",
      note: created.eventNote,
    });
    expectStored(ev, "logbook note");
    const trend = (await api(admin, "GET", `/api/v1/objectives/${o0}/trend`)).json.events as Array<{
      note: string | null;
    }>;
    expect(trend.map((e) => e.note)).toContain(created.eventNote);

    // Over the maximum: a 400 naming the field. NUL cannot be stored by PostgreSQL: a 4xx, not a 500.
    const inst = created.instruments[0]!;
    expectRefused(
      await post(admin, "/api/v1/instruments", { name: "x".repeat(121), modality: "widefield" }),
      "121-character name",
    );
    expectRefused(
      await post(admin, `/api/v1/objectives/${o0}/events`, { kind: "note", note: "x".repeat(2001) }),
      "2001-character note",
    );
    expectRefused(
      await post(admin, "/api/v1/instruments", { name: `nul ${TAG}\u0000x`, modality: "widefield" }),
      "NUL in a name",
    );
    expectRefused(
      await post(admin, "/api/v1/instruments", {
        name: `nul ${TAG}`,
        modality: "widefield",
        notes: "a\u0000b",
      }),
      "NUL in notes",
    );
    expectRefused(
      await post(admin, `/api/v1/objectives/${o0}/events`, { kind: "note", note: "a\u0000b" }),
      "NUL in a note",
    );
    expectRefused(
      await api(admin, "PATCH", `/api/v1/objectives/${o0}`, {
        headers: JSON_HEADERS,
        body: JSON.stringify({ name: "a\u0000b" }),
      }),
      "NUL in a rename",
    );
    // Other control characters are text to PostgreSQL: stored verbatim, or refused with a 4xx.
    const ctl = `ctl ${TAG} \u0007\u001b[31mred\u007f`;
    const r = await post(admin, "/api/v1/instruments", {
      name: ctl,
      modality: "widefield",
      location: inst.location,
    });
    if (expectStoredOrRefused(r, "control characters")) {
      expect(r.json.name).toBe(ctl);
      created.instruments.push({
        id: r.json.id as string,
        name: ctl,
        serialNumber: "",
        location: "",
        notes: "",
      });
    }
  });

  it("stack file names (multipart and tus) and OME-XML text in the file are stored verbatim", async () => {
    // Multipart: a real bead stack (the measurement below uses it), UTF-8 name.
    const fileName = `${valuesFor(251, FILE_PIECES, [`=HYPERLINK('x.example')`])[0]}.tif`;
    expect(fileName.length).toBe(255);
    const demo = makeDemoBeadStack({
      na: 1.4,
      immersionRi: 1.518,
      sampleRi: 1.518,
      emissionWavelengthNm: 520,
      seed: 61_000 + (Date.now() % 100_000),
    });
    const up = await uploadMultipart(admin, demo.tiff, fileName);
    expectStored(up, "multipart stack");
    created.stacks.push(up.json.id as string);
    created.multipartStack = { id: up.json.id as string, fileName };
    expect(up.json.fileName).toBe(fileName);

    // A routine check of the hostile objective on the hostile-named stack (waited for later).
    const m = await post(admin, "/api/v1/measurements", {
      stackId: created.multipartStack.id,
      objectiveId: created.objectives[0]!.id,
      purpose: "routine",
      emissionWavelengthNm: 520,
      beadDiameterNm: 100,
    });
    expectStored(m, "measurement");
    created.measurementId = m.json.id as string;

    // A path in a multipart file name is reduced to its base name (never a path on the server).
    const pathName = await uploadMultipart(admin, tinyTiff(Date.now() % 9973), `../../etc/${TAG}-passwd.tif`);
    expectStored(pathName, "multipart stack with a path");
    created.stacks.push(pathName.json.id as string);
    expect(pathName.json.fileName).toBe(`${TAG}-passwd.tif`);

    // tus (what the browser uses): any characters, taken from Upload-Metadata.
    const tusName = valuesFor(255)[0]!;
    const tus = await uploadTus(admin, tinyTiff((Date.now() % 9973) + 1), tusName);
    expectStored(tus, "tus stack");
    created.stacks.push(tus.json.id as string);
    created.tusStack = { id: tus.json.id as string, fileName: tusName };
    expect(tus.json.fileName).toBe(tusName);
    const nul = await uploadTus(admin, tinyTiff((Date.now() % 9973) + 2), `nul ${TAG}\u0000.tif`);
    expect(nul.status, nul.text).toBeLessThan(500);
    if (nul.status < 300) created.stacks.push(nul.json.id as string);

    // OME-XML text fields come from the file itself.
    const immersion = `${HTML[0]}${HTML[1]}`;
    const mode = `${CSV_LEADS[0]}${SQL.join("")}${UNICODE[0]}`;
    const date = `${HTML[3]}${HTML[2]}${HTML[4]}${HTML[5]}`;
    const unit = `<svg onload=window.__pwned=1>`;
    const ome = `<?xml version="1.0" encoding="UTF-8"?>
<OME xmlns="http://www.openmicroscopy.org/Schemas/OME/2016-06">
<Instrument ID="Instrument:0"><Objective ID="Objective:0:0" LensNA="1.4" Immersion="${xml(immersion)}" NominalMagnification="63"/></Instrument>
<Image ID="Image:0" Name="beads"><AcquisitionDate>${xml(date)}</AcquisitionDate>
<Pixels ID="Pixels:0" DimensionOrder="XYZCT" Type="uint16" SizeX="16" SizeY="16" SizeZ="3" SizeC="1" SizeT="1" PhysicalSizeX="0.1" PhysicalSizeXUnit="${xml(unit)}" PhysicalSizeY="0.1" PhysicalSizeYUnit="µm" PhysicalSizeZ="0.2" PhysicalSizeZUnit="µm"><Channel ID="Channel:0:0" SamplesPerPixel="1" AcquisitionMode="${xml(mode)}"/><TiffData PlaneCount="3"/></Pixels></Image></OME>`;
    const omeUp = await uploadMultipart(admin, tinyTiff((Date.now() % 9973) + 3, ome), `ome-${TAG}.ome.tif`);
    expectStored(omeUp, "OME-TIFF with hostile metadata");
    created.stacks.push(omeUp.json.id as string);
    created.omeStack = { id: omeUp.json.id as string, values: [immersion, mode, date], warningUnit: unit };
    const back = (await api(admin, "GET", `/api/v1/stacks/${omeUp.json.id}`)).json;
    const meta = back.metadata as Record<string, { value?: unknown } | unknown>;
    expect((meta.immersion as { value: string }).value).toBe(immersion);
    expect((meta.acquisitionMode as { value: string }).value).toBe(mode);
    expect((meta.acquisitionDate as { value: string }).value).toBe(date);
  });

  it("echoed lookups (medium ids, planner names, a status date) come back verbatim or as a 4xx", async () => {
    const medium = VALUES.text80[0]!;
    const m = await post(admin, "/api/v1/measurements", {
      stackId: created.multipartStack.id,
      objectiveId: created.objectives[1]!.id,
      purpose: "routine",
      emissionWavelengthNm: 520,
      beadDiameterNm: 100,
      mediumId: medium,
    });
    expectRefused(m, "unknown medium");
    expect(m.json.error!.message).toContain(medium);

    const plannerBody = {
      objectives: VALUES.text80.map((name) => ({ na: 1.2, immersionRi: 1.333, name })),
      mediumId: "water",
      emissionWavelengthNm: 520,
      modality: "widefield",
      depthsUm: [0, 20],
    };
    const p = await post(admin, "/api/v1/planner", plannerBody);
    expectStored(p, "planner");
    const names = (p.json.predictions as Array<{ objective: { name: string } }>).map((x) => x.objective.name);
    expect(names.sort()).toEqual([...VALUES.text80].sort());
    const bad = await post(admin, "/api/v1/planner", { ...plannerBody, mediumId: medium });
    expectRefused(bad, "planner with an unknown medium");
    expect(bad.json.error!.message).toContain(medium);
    expectRefused(
      await post(admin, "/api/v1/planner", { ...plannerBody, mediumId: "a\u0000b" }),
      "NUL medium",
    );

    const o0 = created.objectives[0]!.id;
    expectRefused(
      await api(admin, "GET", `/api/v1/objectives/${o0}/status?date=${encodeURIComponent(HTML.join(""))}`),
      "hostile status date",
    );
    expectRefused(
      await api(
        admin,
        "GET",
        `/api/v1/measurements/${created.measurementId}/beads?format=${encodeURIComponent(SQL[0]!)}`,
      ),
      "hostile export format",
    );
  });
});

describe("hostile text through server actions (forms in Chromium)", () => {
  it("the instrument form stores a hostile instrument", async () => {
    const { page } = s;
    await signInAs(page, "admin");
    await visit(s, "/instruments", "#inst-name");
    created.uiInstrumentName = `${VALUES.name120[0]!.slice(0, 110)} ui`;
    await page.fill("#inst-name", created.uiInstrumentName);
    await page.fill("#inst-serial", VALUES.name120[1]!);
    await page.fill("#inst-location", VALUES.text200.at(-1)!);
    await page
      .locator("form", { has: page.locator("#inst-name") })
      .locator("button")
      .click();
    await page.waitForFunction((n) => document.body.textContent?.includes(n), created.uiInstrumentName, {
      timeout: 15_000,
    });
    const listed = (await api(admin, "GET", "/api/v1/instruments")).json.instruments as Array<
      Record<string, unknown>
    >;
    const row = listed.find((x) => x.name === created.uiInstrumentName)!;
    expect(row.serialNumber).toBe(VALUES.name120[1]);
    expect(row.location).toBe(VALUES.text200.at(-1));
    await expectSafePage(s, "/instruments after the form", [created.uiInstrumentName]);
  });

  it("API token names", async () => {
    const { page } = s;
    await visit(s, "/settings", "#token-name");
    for (const name of VALUES.text80) {
      await page.fill("#token-name", name);
      await page
        .locator("form", { has: page.locator("#token-name") })
        .locator("button")
        .click();
      await page.locator("code", { hasText: /^bb_/ }).first().waitFor({ timeout: 15_000 });
      created.tokenNames.push(name);
      // The table shows the new row after the form's revalidation.
      await page.waitForFunction(
        (n) => [...document.querySelectorAll("td")].some((td) => td.textContent === n),
        name,
        {
          timeout: 15_000,
        },
      );
    }
    await page.fill("#token-name", "y".repeat(81));
    await page
      .locator("form", { has: page.locator("#token-name") })
      .locator("button")
      .click();
    await page
      .locator("form", { has: page.locator("#token-name") })
      .locator("[role=alert]")
      .waitFor();
    const rows = await getDb().select().from(apiTokens).where(inArray(apiTokens.name, VALUES.text80));
    expect(rows.map((r) => r.name).sort()).toEqual([...VALUES.text80].sort());
    await expectSafePage(s, "/settings with hostile token names", VALUES.text80);
  });

  it("invitations with SQL-looking addresses; accepting with hostile names", async () => {
    const { page } = s;
    const u = randomUUID().slice(0, 8);
    // E-mail syntax allows ' + - in the local part: SQL-looking but valid.
    created.people = VALUES.name120.map((name, i) => ({
      email: `o'neil'--+${u}${i}@hostile.example`,
      name,
      password: `e2e-${randomUUID()}`,
    }));
    created.pendingEmail = `x'or'1'--+${u}@hostile.example`;
    await visit(s, "/settings", "#invite-email");
    const form = page.getByTestId("invite-form");
    // The browser's own e-mail check is switched off, so the server action sees everything.
    await form.evaluate((f) => f.setAttribute("novalidate", ""));
    /** Submit the invitation form and wait until its server action has answered and rendered. */
    const invite = async (email: string) => {
      await form.locator("#invite-email").fill(email);
      await form.locator("#invite-role").selectOption("engineer");
      const answered = page.waitForResponse(
        (r) => r.request().method() === "POST" && !!r.request().headers()["next-action"],
      );
      await form.locator("button").click();
      await answered;
      await form.locator("button", { hasText: "Send invitation" }).waitFor();
    };
    for (const bad of [`${HTML[0]}@x.example`, `x@x.example${SQL[0]}`, `a\u0000b@x.example`]) {
      await invite(bad);
      expect(await form.locator("[role=alert]").textContent()).toContain("email");
      if (!bad.includes("\u0000"))
        expect(
          await getDb().select().from(invitations).where(eq(invitations.email, bad.toLowerCase())),
        ).toHaveLength(0);
    }
    for (const email of [...created.people.map((p) => p.email), created.pendingEmail]) {
      await invite(email);
      await form
        .locator("[role=status]")
        .waitFor({ timeout: 15_000 })
        .catch(async () => {
          throw new Error(`the invitation to ${email} was not confirmed: ${await form.textContent()}`);
        });
      await page.waitForFunction(
        (e) => [...document.querySelectorAll("td")].some((td) => td.textContent === e),
        email,
        {
          timeout: 15_000,
        },
      );
    }
    await expectSafePage(s, "/settings with pending invitations", [
      created.pendingEmail,
      ...created.people.map((p) => p.email),
    ]);

    for (const person of created.people) {
      const mail = await mailTo(person.email, /Invitation/);
      const link = /https?:\/\/[^\s"<>]+\/invite\/[A-Za-z0-9_-]+/.exec(mail.text ?? "")?.[0];
      expect(link, mail.text ?? "").toBeTruthy();
      const fresh = await openBrowser();
      try {
        const p = fresh.page;
        await p.goto(`${BASE_URL}${new URL(link!).pathname}`);
        await p.getByTestId("accept-invitation-form").waitFor();
        await expectSafePage(fresh, "/invite/…", [person.email]);
        await p.fill("#invite-name", person.name);
        await p.fill("#invite-password", person.password);
        await p.fill("#invite-confirm", person.password);
        await p.click("button[type=submit]");
        await p.waitForURL(/\/sign-in\?reason=invited/, { timeout: 15_000 });
      } finally {
        await fresh.close();
      }
      const [row] = await getDb().select().from(users).where(eq(users.email, person.email));
      expect(row!.name).toBe(person.name);
      person.userId = row!.id;
    }
  });
});

describe("service visits with hostile text", () => {
  it("are planned, signed off and e-mailed; the text is stored verbatim", async () => {
    const today = new Date().toISOString().slice(0, 10);
    const titles = VALUES.text160;
    for (let i = 0; i < titles.length; i++) {
      const person = created.people[i % created.people.length]!;
      const r = await post(admin, "/api/v1/service-visits", {
        title: titles[i],
        engineerEmail: person.email,
        instrumentIds: created.instruments.slice(0, 2).map((x) => x.id),
        startsAt: today,
        endsAt: today,
      });
      expectStored(r, "service visit");
      created.visits.push({ id: r.json.id as string, title: titles[i]! });
    }
    expectRefused(
      await post(admin, "/api/v1/service-visits", {
        title: "x".repeat(161),
        instrumentIds: [created.instruments[0]!.id],
        startsAt: today,
        endsAt: today,
      }),
      "161-character title",
    );
    expectRefused(
      await post(admin, "/api/v1/service-visits", {
        title: `t ${TAG}`,
        engineerEmail: `${HTML[0]}@x.example`,
        instrumentIds: [created.instruments[0]!.id],
        startsAt: today,
        endsAt: today,
      }),
      "hostile engineer e-mail",
    );
    expectRefused(
      await post(admin, "/api/v1/service-visits", {
        title: `t ${TAG}\u0000`,
        instrumentIds: [created.instruments[0]!.id],
        startsAt: today,
        endsAt: today,
      }),
      "NUL in a title",
    );

    const v0 = created.visits[0]!;
    created.report = VALUES.text20000[0]!;
    expectRefused(
      await post(admin, `/api/v1/service-visits/${v0.id}/sign-off`, { report: "a\u0000b" }),
      "NUL in a report",
    );
    expectStored(
      await post(admin, `/api/v1/service-visits/${v0.id}/sign-off`, { report: created.report }),
      "sign-off",
    );
    for (const v of created.visits) {
      const back = (await api(admin, "GET", `/api/v1/service-visits/${v.id}`)).json.visit as Record<
        string,
        unknown
      >;
      expect(back.title).toBe(v.title);
      if (v === v0) expect(back.report).toBe(created.report);
    }
    const listed = (await api(admin, "GET", "/api/v1/service-visits")).json.visits as Array<
      Record<string, unknown>
    >;
    // A member's address attaches that member (the address column is kept for pending invitations).
    expect(listed.find((x) => x.id === v0.id)!.engineerId).toBe(created.people[0]!.userId);
    expectStored(await api(admin, "POST", `/api/v1/service-visits/${v0.id}/report/email`), "report e-mail");
  });
});

describe("every page shows the hostile text as text", () => {
  it("waits for the measurement of the hostile objective", async () => {
    let status = "";
    for (let i = 0; i < 120 && status !== "done" && status !== "failed"; i++) {
      status = (await api(admin, "GET", `/api/v1/measurements/${created.measurementId}`)).json
        .status as string;
      if (status !== "done") await new Promise((r) => setTimeout(r, 500));
    }
    expect(status).toBe("done");
  });

  it("instruments, dashboard, objective pages", async () => {
    const inst = created.instruments.slice(0, 2);
    const objs = created.objectives;
    await visit(s, "/instruments", "[data-testid=instrument-card]");
    await expectSafePage(s, "/instruments", [
      ...inst.flatMap((i) => [i.name, i.serialNumber, i.location]),
      ...objs.flatMap((o) => [o.name, o.serialNumber]),
    ]);
    await visit(s, "/dashboard", "[data-testid=objective-status-table]");
    await expectSafePage(s, "/dashboard", [...inst.map((i) => i.name), ...objs.map((o) => o.name)]);
    for (const o of objs) {
      await visit(s, `/instruments/objectives/${o.id}`, "h1");
      await expectSafePage(s, `objective page ${o.id}`, [o.name, o.serialNumber, o.correctionCollar]);
    }
    // The first objective's logbook: the note in the table and in the chart's annotation hover.
    const o0 = objs[0]!;
    await visit(s, `/instruments/objectives/${o0.id}`, "[data-testid=logbook-charts] .js-plotly-plot");
    await expectSafePage(s, "objective page with a logbook", [
      created.eventNote,
      created.multipartStack.fileName,
    ]);
    const annotation = s.page.locator("[data-testid=logbook-charts] .annotation").first();
    await annotation.hover();
    const hover = s.page.locator("[data-testid=logbook-charts] .hoverlayer .hovertext").first();
    await hover.waitFor({ timeout: 10_000 });
    const shown = (await hover.textContent()) ?? "";
    // Plotly wraps long hover text; the first words must read as written.
    expect(shown.replace(/\s+/g, " ")).toContain(created.eventNote.slice(0, 60).replace(/\s+/g, " "));
    expect((await inspect(s.page)).injected).toEqual([]);
  });

  it("planner, measurement and stack pages", async () => {
    const objs = created.objectives;
    const ids = objs.map((o) => o.id).join(",");
    await visit(s, `/planner?objectives=${ids}&medium=water`, "[data-testid=planner-rank-item]");
    await s.page.waitForFunction(
      (n) => document.querySelectorAll("[data-testid=planner-chart-axial] .legendtext").length >= n,
      objs.length,
      { timeout: 30_000 },
    );
    await expectSafePage(s, "/planner", [
      ...objs.map((o) => o.name),
      ...created.instruments.slice(0, 2).map((i) => i.name),
    ]);
    // Chart legends are SVG text drawn by Plotly: the names must read exactly as written.
    const legends = await s.page.locator("[data-testid=planner-chart-axial] .legendtext").allTextContents();
    for (const o of objs) expect(legends).toContain(o.name);

    await visit(s, `/planner/print?objectives=${ids}&medium=water`, "[data-testid=print-table]");
    await expectSafePage(
      s,
      "/planner/print",
      objs.map((o) => o.name),
    );

    await visit(s, `/measurements/new?stack=${created.multipartStack.id}`, "select");
    await expectSafePage(s, "/measurements/new", [
      created.multipartStack.fileName,
      ...objs.map((o, i) => `${o.name} — ${created.instruments[i]!.name}`),
    ]);

    await visit(s, `/measurements/${created.measurementId}`, "[data-testid=verdict-card]");
    await expectSafePage(s, "/measurements/id", [objs[0]!.name]);

    await visit(s, "/stacks", "[data-testid=stack-table]");
    await expectSafePage(s, "/stacks", [created.multipartStack.fileName, created.tusStack.fileName]);
    for (const st of [created.multipartStack, created.tusStack]) {
      await visit(s, `/stacks/${st.id}`, "[data-testid=stack-facts]");
      const f = await expectSafePage(s, `/stacks/${st.id}`, [st.fileName]);
      expect(f.title).toBe("Stack · Beadbench");
      expect(await s.page.getByTestId("stack-projection").getAttribute("alt")).toContain(st.fileName);
    }
    await visit(s, `/stacks/${created.multipartStack.id}`, "[data-testid=stack-measurements]");
    await expectSafePage(s, "stack page with a measurement", [objs[0]!.name]);
    await visit(s, `/stacks/${created.omeStack.id}`, "[data-testid=stack-metadata]");
    await expectSafePage(s, "OME stack page", [...created.omeStack.values, created.omeStack.warningUnit]);
  });

  it("service visits, settings and the audit log", async () => {
    const [v0, v1] = created.visits as [{ id: string; title: string }, { id: string; title: string }];
    const instNames = created.instruments.slice(0, 2).map((i) => i.name);
    const people = created.people.map((p) => p.name);
    await visit(s, "/service-visits", "table");
    await expectSafePage(s, "/service-visits", [v0.title, v1.title, ...instNames, ...people]);
    await visit(s, `/service-visits/${v0.id}`, "[data-testid=visit-report]");
    await expectSafePage(s, "signed-off visit", [
      v0.title,
      created.report,
      people[0]!,
      ...instNames,
      ...created.objectives.map((o) => o.name),
    ]);
    await visit(s, `/service-visits/${v1.id}`, "[data-testid=visit-report]");
    await expectSafePage(s, "open visit", [v1.title, people[1 % people.length]!]);

    await visit(s, "/settings", "#token-name");
    await expectSafePage(s, "/settings", [
      ...people,
      ...created.people.map((p) => p.email),
      created.pendingEmail,
      ...created.tokenNames,
    ]);
    expect(
      await s.page.locator(`[aria-label="Withdraw the invitation to ${created.pendingEmail}"]`).count(),
    ).toBe(1);

    // The audit log shows details as JSON: the start of each value, JSON-escaped, as text.
    await visit(s, "/settings/audit?action=objective.update", "[data-testid=audit-table]");
    await expectSafePage(
      s,
      "audit log (objective renames)",
      created.objectives.flatMap((o, i) => [
        JSON.stringify(created.objectiveFirstNames[i]).slice(0, 60),
        JSON.stringify(o.name).slice(0, 60),
      ]),
    );
    await visit(s, "/settings/audit?action=stack.upload", "[data-testid=audit-table]");
    await expectSafePage(s, "audit log (uploads)", [
      JSON.stringify(created.multipartStack.fileName).slice(0, 60),
      JSON.stringify(created.tusStack.fileName).slice(0, 60),
    ]);
    if (readable(CAPTURE)) {
      await visit(s, "/settings/mail", "[data-testid=captured-mail]");
      await expectSafePage(s, "/settings/mail", [v0.title]);
    }
  });

  it("the engineer with a hostile name sees it in the header, and the visit's text", async () => {
    const person = created.people[0]!;
    const eng = await openBrowser();
    try {
      await signInAs(eng.page, { email: person.email, password: person.password });
      expect(await eng.page.getByTestId("user-name").textContent()).toBe(person.name);
      await expectSafePage(eng, "engineer dashboard", [person.name]);
      await eng.page.goto(`${BASE_URL}/service-visits`);
      await expectSafePage(eng, "engineer's visits", [created.visits[0]!.title]);
      await eng.page.goto(`${BASE_URL}/instruments`);
      await expectSafePage(
        eng,
        "engineer's instruments",
        created.instruments.slice(0, 2).map((i) => i.name),
      );
    } finally {
      await eng.close();
    }
  });
});

describe("exports, the visit PDF and e-mails", () => {
  it("summary JSON, bead CSV and JSON", async () => {
    const id = created.measurementId;
    const summary = await api(admin, "GET", `/api/v1/measurements/${id}/summary`);
    expect(summary.status).toBe(200);
    expect(summary.headers.get("content-type")).toContain("application/json");
    expect(JSON.stringify(summary.json)).toContain(JSON.stringify(created.objectives[0]!.name));
    const beads = await api(admin, "GET", `/api/v1/measurements/${id}/beads?format=json`);
    const csv = await api(admin, "GET", `/api/v1/measurements/${id}/beads?format=csv`);
    expect(csv.status).toBe(200);
    expect(csv.headers.get("content-type")).toContain("text/csv");
    const lines = csv.text.trimEnd().split("\n");
    expect(lines.length - 1).toBe((beads.json.beads as unknown[]).length);
    const width = lines[0]!.split(",").length;
    for (const l of lines) {
      expect(l.split(",")).toHaveLength(width); // no quoted commas: numbers and fixed codes only
      for (const cell of l.split(",")) {
        // Source: OWASP "CSV Injection" — text cells must not start a formula.
        if (Number.isNaN(Number(cell))) expect(cell).not.toMatch(/^[=+\-@\t\r]/);
      }
    }
  });

  it("the visit report PDF carries the text (as far as WinAnsi can draw it)", async () => {
    const v0 = created.visits[0]!;
    const res = await fetch(`${BASE_URL}/api/v1/service-visits/${v0.id}/report.pdf`, {
      headers: { Authorization: `Bearer ${admin}` },
    });
    expect(res.status).toBe(200);
    expect(res.headers.get("content-type")).toBe("application/pdf");
    const bytes = new Uint8Array(await res.arrayBuffer());
    expect(Buffer.from(bytes.subarray(0, 5)).toString("latin1")).toBe("%PDF-");
    const text = await pdfText(bytes);
    const values = [
      v0.title,
      created.report.slice(0, 600),
      created.people[0]!.name,
      ...created.instruments.slice(0, 2).map((i) => i.name),
      ...created.objectives.map((o) => o.name),
    ];
    for (const v of values) for (const run of asciiRuns(v)) expect(text, run).toContain(run);
  });

  it("mails escape the text in HTML and keep it in the plain text", async () => {
    const [p0] = created.people as [(typeof created.people)[number]];
    const v0 = created.visits[0]!;
    const instNames = created.instruments.slice(0, 2).map((i) => i.name);
    const planned = await mailTo(p0.email, /^Service visit planned/);
    expect(planned.subject).toContain(v0.title);
    await expectSafeMailHtml(s, planned, [v0.title, ...instNames]);
    const report = await mailTo(p0.email, /^Service visit report/);
    expect(report.subject).toContain(v0.title);
    await expectSafeMailHtml(s, report, [v0.title, ...created.objectives.map((o) => o.name)]);

    // The password-reset mail greets the person by their (hostile) name: asked for through the form.
    const fresh = await openBrowser();
    try {
      await fresh.page.goto(`${BASE_URL}/forgot-password`);
      await fresh.page.fill("#reset-email", p0.email);
      await fresh.page.click("button[type=submit]");
      await fresh.page.getByTestId("forgot-password-notice").waitFor();
    } finally {
      await fresh.close();
    }
    const reset = await mailTo(p0.email, /new Beadbench password/);
    await expectSafeMailHtml(s, reset, [p0.name]);
    created.resetLink =
      /https?:\/\/[^\s"<>]+\/reset-password\/[A-Za-z0-9_-]+/.exec(reset.text ?? "")?.[0] ?? "";
    expect(created.resetLink).toBeTruthy();
  });
});

describe("query parameters and echoed form values", () => {
  it("pages that echo or look up a query parameter stay safe", async () => {
    const h = HTML.join("");
    const medium = VALUES.text80[0]!;
    const o0 = created.objectives[0]!.id;
    await visit(s, `/settings/audit?action=${encodeURIComponent(h)}`, "[data-testid=audit-table]");
    await expectSafePage(s, "audit with a hostile filter", ["That filter is not valid"]);
    await visit(
      s,
      `/planner/print?objectives=${o0}&medium=${encodeURIComponent(medium)}`,
      "[data-testid=planner-print]",
    );
    await expectSafePage(s, "planner print with a hostile medium", [`Unknown medium '${medium}'`]);
    await visit(
      s,
      `/planner?objectives=${o0}&medium=${encodeURIComponent(medium)}`,
      "[data-testid=planner-inputs]",
    );
    await s.page.waitForFunction(
      (m) => document.body.textContent?.includes(m),
      `Unknown medium '${medium}'`,
      {
        timeout: 20_000,
      },
    );
    // The planner's own request is answered 422, which Chromium logs as a console error.
    await expectSafePage(s, "planner with a hostile medium", [`Unknown medium '${medium}'`], {
      allow: /status of 422 .*\/api\/v1\/planner$/,
    });
    await visit(
      s,
      `/measurements/new?stack=${created.tusStack.id}&medium=${encodeURIComponent(h)}`,
      "select",
    );
    await expectSafePage(s, "new measurement with a hostile medium", [created.tusStack.fileName]);
    await visit(
      s,
      `/stacks/${created.tusStack.id}?channel=${encodeURIComponent(h)}`,
      "[data-testid=stack-facts]",
    );
    await expectSafePage(s, "stack with a hostile channel", [created.tusStack.fileName]);

    const anon = await openBrowser();
    try {
      // Lookups by a query key must not reach Object.prototype (a 500 before the fix).
      for (const q of ["__proto__", "constructor", "toString", h]) {
        const res = await anon.page.goto(`${BASE_URL}/sign-in?reason=${encodeURIComponent(q)}`);
        expect(res?.status(), `sign-in?reason=${q}`).toBe(200);
        expect(await anon.page.locator("main [role=status]").count(), q).toBe(0);
        await expectSafePage(anon, `sign-in?reason=${q}`, ["Sign in"]);
        const forgot = await anon.page.goto(`${BASE_URL}/forgot-password?notice=${encodeURIComponent(q)}`);
        expect(forgot?.status()).toBe(200);
        expect(await anon.page.getByTestId("forgot-password-notice").count(), q).toBe(0);
        await expectSafePage(anon, `forgot-password?notice=${q}`, []);
        const reset = await anon.page.goto(
          `${created.resetLink.replace(/^https?:\/\/[^/]+/, BASE_URL)}?problem=${encodeURIComponent(q)}`,
        );
        expect(reset?.status()).toBe(200);
        // (Next.js keeps a role=alert route announcer outside <main>.)
        expect(await anon.page.locator("main [role=alert]").count(), q).toBe(0);
        await expectSafePage(anon, `reset-password?problem=${q}`, [created.people[0]!.email]);
      }
      // The sign-in form hands the typed address back: as a value, not as markup.
      await anon.page.goto(`${BASE_URL}/sign-in`);
      const email = `${HTML[0]}${HTML[1]}@x.example${SQL[1]}`;
      await anon.page
        .locator("form", { has: anon.page.locator("#email") })
        .evaluate((f) => f.setAttribute("novalidate", ""));
      await anon.page.fill("#email", email);
      await anon.page.fill("#password", "not-the-password");
      await anon.page.click("button[type=submit]");
      await anon.page.getByTestId("sign-in-error").waitFor({ timeout: 15_000 });
      const f = await expectSafePage(anon, "sign-in with a hostile address", []);
      expect(f.values).toContain(email);
    } finally {
      await anon.close();
    }
  });
});

function readable(file: string): boolean {
  try {
    readFileSync(file);
    return true;
  } catch {
    return false;
  }
}
