/**
 * Load benchmark (issue 8): how a running web app and its worker hold up under many users.
 * Traffic goes only to the server at LOAD_BASE_URL (default http://localhost:3100; localhost or
 * 127.0.0.1 only); DATABASE_URL names its database, used to make one API token per virtual user
 * for the demo staff member (revoked at the end), to find a finished measurement, and to read the
 * queue timestamps. Without either, or when the server does not answer, it prints why and
 * returns no rows. Everything stops by itself: a hard stop aborts all requests after 60 s.
 *
 * 1. Read load: 20, then 50 virtual users, each with its own token, loop for 10 s over the
 *    objectives list, one objective's trend, one finished measurement and its beads as CSV.
 *    Latency percentiles are over 2xx answers only; other statuses are counted (429 apart).
 *    Each user also sends its own X-Forwarded-For, so the per-address limit (1200/min) applies
 *    per user as it would for people at different machines; LOAD_ONE_ADDRESS=1 leaves it out,
 *    and then all users share the one local address's limit.
 * 2. Page load: sign in once through Auth.js (CSRF token, credentials callback) with the demo
 *    password from DEMO_PASSWORDS_FILE (default .data/demo-credentials.json), then 5 users load
 *    the dashboard HTML for 5 s with that session.
 * 3. Queue: upload one small invented stack (`load-bench-<time>.tif`), create 10 "sample"
 *    measurements on it at once (sample, so the objectives' QC history and alerts are untouched),
 *    and time them to done from the rows' created/started/finished timestamps. The measurements
 *    stay in the database; any not done at the hard stop are cancelled.
 *
 * Run: `DATABASE_URL=… AUTH_SECRET=… npm run bench -- load`.
 */
import { readFileSync } from "node:fs";
import { cpus, loadavg } from "node:os";
import { and, desc, eq, inArray, ne } from "drizzle-orm";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";
import type { Actor } from "../../src/server/auth/permissions";
import { closeDb, getDb, type Db } from "../../src/server/db/client";
import { measurements, memberships, users } from "../../src/server/db/schema";
import { createApiToken, revokeApiToken } from "../../src/server/services/api-tokens";

interface Row {
  name: string;
  value: number;
  unit: string;
  target?: string;
}

const BASE = (process.env.LOAD_BASE_URL ?? "http://localhost:3100").replace(/\/+$/, "");
const READ_USERS = [20, 50];
const READ_SECONDS = 10;
const PAGE_USERS = 5;
const PAGE_SECONDS = 5;
const QUEUE_K = 10;
const HARD_STOP_MS = 60_000;
const EMAIL = "staff@larkspur.example";

/** Answers of one endpoint: latencies of 2xx answers (ms), count per status, failed requests. */
interface Stats {
  label: string;
  url: string;
  ms: number[];
  statuses: Map<number, number>;
  failed: number;
}

const newStats = (label: string, url: string): Stats => ({
  label,
  url,
  ms: [],
  statuses: new Map(),
  failed: 0,
});

const byValue = (a: number, b: number) => a - b;

function percentile(sorted: number[], p: number): number {
  if (sorted.length === 0) return NaN;
  return sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)];
}

/** One virtual user: request the endpoints in turn until `until`, recording each answer. */
async function virtualUser(
  stats: Stats[],
  init: RequestInit,
  first: number,
  until: number,
  signal: AbortSignal,
): Promise<void> {
  for (let i = first; performance.now() < until && !signal.aborted; i++) {
    const s = stats[i % stats.length];
    const t = performance.now();
    try {
      const res = await fetch(s.url, init);
      await res.arrayBuffer();
      s.statuses.set(res.status, (s.statuses.get(res.status) ?? 0) + 1);
      if (res.status < 300) s.ms.push(performance.now() - t);
    } catch {
      s.failed++;
    }
  }
}

/** Run `inits.length` users for `seconds`; rows for throughput, latency and errors. */
async function loop(
  tag: string,
  endpoints: Array<[label: string, url: string]>,
  inits: RequestInit[],
  seconds: number,
  signal: AbortSignal,
  p95Target: (label: string) => string | undefined,
): Promise<Row[]> {
  const stats = endpoints.map(([label, url]) => newStats(label, url));
  const t0 = performance.now();
  const cpu0 = process.cpuUsage();
  await Promise.all(inits.map((init, i) => virtualUser(stats, init, i, t0 + seconds * 1000, signal)));
  const elapsedS = (performance.now() - t0) / 1000;
  const cpu = process.cpuUsage(cpu0);
  const all = new Map<number, number>();
  let failed = 0;
  for (const s of stats) {
    failed += s.failed;
    for (const [code, n] of s.statuses) all.set(code, (all.get(code) ?? 0) + n);
  }
  const answers = [...all.values()].reduce((a, b) => a + b, 0);
  const ok = [...all].filter(([c]) => c < 300).reduce((a, [, n]) => a + n, 0);
  const rows: Row[] = [
    { name: `${tag}: answers/s (all statuses)`, value: answers / elapsedS, unit: "req/s" },
    { name: `${tag}: 2xx answers/s`, value: ok / elapsedS, unit: "req/s" },
    // The load generator shares the machine with the server: its own CPU time, in % of one core.
    { name: `${tag}: client CPU`, value: ((cpu.user + cpu.system) / 1e4 / elapsedS) | 0, unit: "% core" },
  ];
  for (const s of stats) {
    const sorted = s.ms.sort(byValue);
    rows.push(
      { name: `${tag}: ${s.label} p50`, value: percentile(sorted, 50), unit: "ms" },
      {
        name: `${tag}: ${s.label} p95`,
        value: percentile(sorted, 95),
        unit: "ms",
        target: p95Target(s.label),
      },
      { name: `${tag}: ${s.label} p99`, value: percentile(sorted, 99), unit: "ms" },
    );
  }
  const fiveXx = [...all].filter(([c]) => c >= 500).reduce((a, [, n]) => a + n, 0);
  rows.push(
    { name: `${tag}: 429 (rate limited)`, value: all.get(429) ?? 0, unit: "answers" },
    { name: `${tag}: 5xx`, value: fiveXx, unit: "answers", target: "0" },
  );
  for (const [code, n] of [...all].sort((a, b) => a[0] - b[0])) {
    if (code >= 300 && code !== 429 && code < 500)
      rows.push({ name: `${tag}: status ${code}`, value: n, unit: "answers" });
  }
  if (failed)
    rows.push({ name: `${tag}: no answer (network error or aborted)`, value: failed, unit: "requests" });
  return rows;
}

/** Sign in like a browser: CSRF cookie and token, then the credentials callback. Returns the Cookie header. */
async function signIn(email: string, password: string, signal: AbortSignal): Promise<string | null> {
  const csrfRes = await fetch(`${BASE}/api/auth/csrf`, { signal });
  const { csrfToken } = (await csrfRes.json()) as { csrfToken: string };
  const jar = csrfRes.headers.getSetCookie().map((c) => c.split(";")[0]);
  const res = await fetch(`${BASE}/api/auth/callback/credentials`, {
    method: "POST",
    redirect: "manual",
    signal,
    headers: { "Content-Type": "application/x-www-form-urlencoded", Cookie: jar.join("; ") },
    body: new URLSearchParams({ email, password, csrfToken, callbackUrl: `${BASE}/dashboard` }),
  });
  await res.arrayBuffer();
  const session = res.headers.getSetCookie().find((c) => c.includes("authjs.session-token="));
  return session ? session.split(";")[0] : null;
}

type Init = RequestInit & { headers: Record<string, string> };

/** Read load: `inits.length` users over the four read endpoints. */
async function readLoad(
  inits: Init[],
  target: { id: string; objectiveId: string },
  signal: AbortSignal,
): Promise<Row[]> {
  const endpoints: Array<[string, string]> = [
    ["objectives", `${BASE}/api/v1/objectives`],
    ["trend", `${BASE}/api/v1/objectives/${target.objectiveId}/trend`],
    ["measurement", `${BASE}/api/v1/measurements/${target.id}`],
    ["beads csv", `${BASE}/api/v1/measurements/${target.id}/beads?format=csv`],
  ];
  const n = inits.length;
  const p95 = (label: string) => (n === 20 && label !== "beads csv" ? "< 500 ms" : undefined);
  return loop(`read ${n} users`, endpoints, inits, READ_SECONDS, signal, p95);
}

/** Page load: PAGE_USERS users load the dashboard with one signed-in session. */
async function pageLoad(role: string, signal: AbortSignal): Promise<Row[]> {
  let password: string | undefined;
  try {
    const file = process.env.DEMO_PASSWORDS_FILE ?? ".data/demo-credentials.json";
    password = (JSON.parse(readFileSync(file, "utf8")) as Record<string, string>)[role];
  } catch {
    /* reported below */
  }
  const cookie = password ? await signIn(EMAIL, password, signal) : null;
  if (!cookie) {
    console.log("load.bench: could not sign in (no demo password file, or refused); page load skipped.");
    return [];
  }
  const init: RequestInit = { signal, redirect: "manual", headers: { Cookie: cookie } };
  const first = await fetch(`${BASE}/dashboard`, init);
  if (first.status !== 200 || !(await first.text()).includes("Every objective, most urgent first")) {
    console.log(`load.bench: the dashboard answered ${first.status} without its heading; page load skipped.`);
    return [];
  }
  const inits = Array.from({ length: PAGE_USERS }, () => init);
  const endpoints: Array<[string, string]> = [["dashboard", `${BASE}/dashboard`]];
  return loop(`pages ${PAGE_USERS} users`, endpoints, inits, PAGE_SECONDS, signal, () => undefined);
}

async function call(
  init: Init,
  path: string,
  extra: { method?: string; body?: BodyInit; type?: string } = {},
) {
  const headers = extra.type ? { ...init.headers, "Content-Type": extra.type } : init.headers;
  const res = await fetch(`${BASE}${path}`, { ...init, headers, method: extra.method, body: extra.body });
  return { status: res.status, json: (await res.json()) as Record<string, unknown> };
}

/** Queue throughput: QUEUE_K measurements of one small stack at once, timed from their rows. */
async function queueLoad(db: Db, inits: Init[], signal: AbortSignal, stopAt: number): Promise<Row[]> {
  const list = await call(inits[0], "/api/v1/objectives");
  const objectives = list.json.objectives as Array<{ id: string; name: string }>;
  const objective = objectives.find((o) => o.name.includes("1.40 oil")) ?? objectives[0];
  const demo = makeDemoBeadStack({
    na: 1.4,
    immersionRi: 1.518,
    sampleRi: 1.518,
    emissionWavelengthNm: 520,
    seed: Date.now() % 1_000_000,
  });
  const fileName = `load-bench-${new Date().toISOString().replace(/[:.]/g, "-")}.tif`;
  const form = new FormData();
  form.append("file", new Blob([demo.tiff as BlobPart], { type: "image/tiff" }), fileName);
  const stack = await call(inits[0], "/api/v1/stacks", { method: "POST", body: form });
  if (stack.status !== 201 && stack.status !== 200) {
    console.log(`load.bench: the stack upload answered ${stack.status}; queue skipped.`);
    return [];
  }
  const body = JSON.stringify({
    stackId: stack.json.id,
    objectiveId: objective.id,
    purpose: "sample",
    sampleRi: 1.518,
    emissionWavelengthNm: 520,
    modality: "widefield",
    beadDiameterNm: 100,
  });
  const tSubmit = performance.now();
  const created = await Promise.all(
    inits
      .slice(0, QUEUE_K)
      .map((init) => call(init, "/api/v1/measurements", { method: "POST", body, type: "application/json" })),
  );
  const submitS = (performance.now() - tSubmit) / 1000;
  const ids = created.flatMap((c) => (typeof c.json.id === "string" ? [c.json.id] : []));

  const terminal = ["done", "failed", "cancelled"];
  let state: Array<{
    id: string;
    status: string;
    createdAt: Date;
    startedAt: Date | null;
    finishedAt: Date | null;
  }> = [];
  while (ids.length) {
    state = await db
      .select({
        id: measurements.id,
        status: measurements.status,
        createdAt: measurements.createdAt,
        startedAt: measurements.startedAt,
        finishedAt: measurements.finishedAt,
      })
      .from(measurements)
      .where(inArray(measurements.id, ids));
    if (state.every((s) => terminal.includes(s.status))) break;
    if (signal.aborted || performance.now() >= stopAt) break;
    await new Promise((r) => setTimeout(r, 250));
  }
  // Leave no work behind for the worker once the bench has stopped.
  const unfinished = state.filter((s) => !terminal.includes(s.status));
  const noSignal = { ...inits[0], signal: undefined };
  for (const s of unfinished) await call(noSignal, `/api/v1/measurements/${s.id}/cancel`, { method: "POST" });

  const done = state.filter((s) => s.status === "done" && s.finishedAt);
  const seconds = (from: Date, to: Date) => (to.getTime() - from.getTime()) / 1000;
  const median = (xs: number[]) => percentile(xs.sort(byValue), 50);
  const rows: Row[] = [
    { name: `queue: measurements created (of ${QUEUE_K})`, value: ids.length, unit: "count" },
    { name: "queue: submit all (parallel POSTs)", value: submitS, unit: "s" },
    { name: "queue: done", value: done.length, unit: "count", target: String(QUEUE_K) },
    {
      name: "queue: failed",
      value: state.filter((s) => s.status === "failed").length,
      unit: "count",
      target: "0",
    },
    { name: "queue: not done at the stop (cancelled)", value: unfinished.length, unit: "count" },
  ];
  if (done.length) {
    const firstCreated = new Date(Math.min(...state.map((s) => s.createdAt.getTime())));
    const lastDone = new Date(Math.max(...done.map((s) => s.finishedAt!.getTime())));
    const ran = done.filter((s) => s.startedAt);
    rows.push(
      { name: "queue: first created → last done", value: seconds(firstCreated, lastDone), unit: "s" },
      {
        name: "queue: median queued → done",
        value: median(done.map((s) => seconds(s.createdAt, s.finishedAt!))),
        unit: "s",
      },
      {
        name: "queue: median started → done (analysis)",
        value: median(ran.map((s) => seconds(s.startedAt!, s.finishedAt!))),
        unit: "s",
      },
    );
  }
  return rows;
}

/** A phase that fails (e.g. cut by the hard stop) is reported and leaves the others' rows. */
async function phase(name: string, rows: Promise<Row[]>): Promise<Row[]> {
  try {
    return await rows;
  } catch (e) {
    console.log(`load.bench: ${name} stopped: ${(e as Error).message}`);
    return [];
  }
}

export async function run(): Promise<Row[]> {
  if (!process.env.DATABASE_URL) {
    console.log("load.bench: DATABASE_URL is not set (the running server's database); skipped.");
    return [];
  }
  if (!["localhost", "127.0.0.1"].includes(new URL(BASE).hostname)) {
    console.log(`load.bench: LOAD_BASE_URL must be on localhost or 127.0.0.1, not ${BASE}; skipped.`);
    return [];
  }
  try {
    await (await fetch(`${BASE}/api/v1/objectives`, { signal: AbortSignal.timeout(5000) })).arrayBuffer();
  } catch {
    console.log(`load.bench: no server answers at ${BASE} (start it with npm start); skipped.`);
    return [];
  }
  // Token creation needs a valid environment; the secret itself is not used for tokens.
  process.env.AUTH_SECRET ??= "bench-only-secret-0123456789abcdef0123456789";

  const started = performance.now();
  console.log(
    `load.bench: ${BASE}, ${cpus().length} CPUs, load average ${loadavg()[0].toFixed(2)} at the start ` +
      "(other jobs on the machine count too).",
  );
  const hardStop = new AbortController();
  const timer = setTimeout(() => hardStop.abort(), HARD_STOP_MS);
  const signal = hardStop.signal;
  const db = getDb();
  const tokens: Array<{ id: string; token: string }> = [];
  let actor: Actor | undefined;
  const rows: Row[] = [];
  try {
    const [u] = await db.select().from(users).where(eq(users.email, EMAIL));
    const [m] = u ? await db.select().from(memberships).where(eq(memberships.userId, u.id)) : [];
    if (!u || !m) {
      console.log(`load.bench: no demo user ${EMAIL} with a facility in that database; skipped.`);
      return [];
    }
    actor = { userId: u.id, facilityId: m.facilityId, role: m.role, via: "token" };
    for (let i = 0; i < Math.max(...READ_USERS); i++) {
      tokens.push(await createApiToken(db, actor, { name: `load-bench ${i + 1}` }));
    }
    const oneAddress = process.env.LOAD_ONE_ADDRESS === "1";
    const inits: Init[] = tokens.map((t, i) => ({
      signal,
      headers: {
        Authorization: `Bearer ${t.token}`,
        ...(oneAddress ? {} : { "X-Forwarded-For": `10.98.0.${i + 1}` }),
      },
    }));

    const [target] = await db
      .select({ id: measurements.id, objectiveId: measurements.objectiveId })
      .from(measurements)
      .where(
        and(
          eq(measurements.facilityId, actor.facilityId),
          eq(measurements.status, "done"),
          ne(measurements.purpose, "sample"),
        ),
      )
      .orderBy(desc(measurements.createdAt))
      .limit(1);
    if (!target) console.log("load.bench: no finished measurement in the facility; read load skipped.");
    for (const n of target ? READ_USERS : []) {
      if (!signal.aborted) rows.push(...(await readLoad(inits.slice(0, n), target, signal)));
    }
    if (!signal.aborted) rows.push(...(await phase("page load", pageLoad(m.role, signal))));
    const stopAt = started + HARD_STOP_MS - 3000;
    if (!signal.aborted) rows.push(...(await phase("queue", queueLoad(db, inits, signal, stopAt))));
    if (signal.aborted) console.log("load.bench: the hard stop cut the run short.");
    return rows;
  } finally {
    clearTimeout(timer);
    for (const t of tokens) await revokeApiToken(db, actor!, t.id).catch(() => {});
    await closeDb().catch(() => {});
    const wallS = ((performance.now() - started) / 1000).toFixed(1);
    console.log(`load.bench: ${tokens.length} tokens revoked; wall time ${wallS} s.`);
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const rows = await run();
  for (const r of rows) console.log(`${r.name.padEnd(64)} ${r.value.toFixed(3).padStart(10)} ${r.unit}`);
}
