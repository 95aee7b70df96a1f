/**
 * Load benchmark (issue 8): how a running web app and its worker hold up under many users.
 * Traffic goes only to the server at LOAD_BASE_URL (default http://localhost:3100; localhost or
 * 127.0.0.1 only); DATABASE_URL names its database, used to make one API token per virtual user
 * for the demo staff member (revoked at the end), to find a finished measurement, and to read the
 * queue timestamps. Without either, or when the server does not answer, it prints why and
 * returns no rows. Everything stops by itself: phases 1–3 share a hard stop at 60 s, phase 4 has
 * its own at LOAD_MIXED_STOP_S (default 300 s); requests still open then are aborted.
 * LOAD_PHASES (comma-separated, default "read,pages,queue,mixed") picks the phases to run.
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
 * 4. Mixed ("20 users browse while 4 measurements of a 100 MB stack run"):
 *    - the invented 200 × 512 × 512 uint16 bead stack of product.bench.ts (~105 MB) is generated
 *      once (~25 s, not timed, before any request) into LOAD_CACHE_DIR (default
 *      <os tmpdir>/beadbench-bench-cache, outside the repository) and reused by later runs (delete
 *      the file to regenerate it, e.g. after fixtures/demo-stacks.ts changed). It is uploaded
 *      through POST /api/v1/stacks (multipart; needs MAX_UPLOAD_BYTES above its size, the default
 *      is 4 GiB). The server recognises the same bytes again, so later runs reuse that one stack
 *      (answer 200, duplicate).
 *    - Baseline: 20 users browse for 30 s with none of our analyses queued (measurements anyone
 *      has queued or running at its start and end are reported; they should be 0).
 *    - Then 4 measurements of the stack are created at once (parallel POSTs, 4 tokens) and the
 *      same 20 users browse until the last is done or the hard stop. The purpose is "sample":
 *      sample measurements are left out of the objectives' logbook, trend and QC alerts, so the
 *      shared demo history stays as it was; the analysis itself is the same as a QC check's.
 *    - Browsing: each user has its own token for the API and all share one signed-in session for
 *      the pages; each requests in turn the dashboard HTML, one objective's page (its logbook),
 *      the objectives list, that objective's trend, one finished measurement and its beads as CSV,
 *      pausing LOAD_THINK_MS (default 1000 ms, ±50 %) between requests, at most 400 requests per
 *      user and 30 s per request. Percentiles per page and endpoint, as in phase 1.
 *    - The 4 measurements: queue wait (created → started) and analysis (started → done) each, and
 *      first created → last done, from the rows; others' measurements that ran on the shared
 *      worker in that window are counted. The web server's and the worker's resident memory is
 *      sampled every 0.5 s, and their CPU time read per span, from /proc when they run on this
 *      machine under one parent (as npm start runs them). The worker takes one job at a time, so
 *      the 4 analyses run one after another: queue waits grow by one analysis each.
 *    The stack and the measurements stay (the API deletes no measurement, and a stack in use
 *    cannot be deleted); any not done at the hard stop are cancelled (a running analysis still
 *    finishes in the worker: cancelling only marks the row).
 *
 * Run: `DATABASE_URL=… npm run bench:load` (this file, then scale.bench.ts); this file alone:
 * `DATABASE_URL=… npx tsx tests/bench/run.ts load.bench`; only the mixed phase: add LOAD_PHASES=mixed.
 */
import {
  existsSync,
  mkdirSync,
  openAsBlob,
  readFileSync,
  readdirSync,
  readlinkSync,
  renameSync,
  writeFileSync,
} from "node:fs";
import { cpus, loadavg, tmpdir } from "node:os";
import path from "node:path";
import { setTimeout as sleep } from "node:timers/promises";
import { and, desc, eq, gt, inArray, isNotNull, isNull, lt, ne, notInArray, or } from "drizzle-orm";
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
/** Mixed load: users, measurements, seconds of idle baseline, think time, bounds. */
const BROWSE_USERS = 20;
const MIXED_K = 4;
const BASELINE_SECONDS = 30;
const THINK_MS = Number(process.env.LOAD_THINK_MS ?? 1000);
const MAX_REQUESTS_PER_USER = 400;
const REQUEST_TIMEOUT_MS = 30_000;
const MIXED_STOP_MS = Number(process.env.LOAD_MIXED_STOP_S ?? 300) * 1000;
/** The stack of product.bench.ts: 200 × 512 × 512 uint16 (~105 MB), 60 beads at 0–10 µm depth. */
const BIG_STACK = {
  shape: [200, 512, 512] as [number, number, number],
  beadCount: 60,
  depthRangeUm: [0, 10] as [number, number],
  seed: 3,
};
const PHASES = new Set((process.env.LOAD_PHASES ?? "read,pages,queue,mixed").split(",").map((p) => p.trim()));

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
  return summarize(tag, stats, (performance.now() - t0) / 1000, process.cpuUsage(cpu0), p95Target);
}

/** Rows for a set of endpoints' answers: throughput, percentiles of 2xx latencies, statuses. */
function summarize(
  tag: string,
  stats: Stats[],
  elapsedS: number,
  cpu: NodeJS.CpuUsage,
  p95Target: (label: string) => string | undefined,
): Row[] {
  const all = new Map<number, number>();
  let failed = 0;
  for (const s of stats) {
    failed += s.failed;
    for (const [code, n] of s.statuses) all.set(code, (all.get(code) ?? 0) + n);
  }
  const answers = [...all.values()].reduce((a, b) => a + b, 0);
  const ok = [...all].filter(([c]) => c < 300).reduce((a, [, n]) => a + n, 0);
  const rows: Row[] = [
    { name: `${tag}: answers (all statuses) in ${elapsedS.toFixed(0)} s`, value: answers, unit: "count" },
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
    rows.push({
      name: `${tag}: no answer (network error, timeout or aborted)`,
      value: failed,
      unit: "requests",
    });
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

/** A signed-in session of the demo staff member (password from DEMO_PASSWORDS_FILE), or null. */
async function demoSession(role: string, signal: AbortSignal): Promise<string | null> {
  let password: string | undefined;
  try {
    const file = process.env.DEMO_PASSWORDS_FILE ?? ".data/demo-credentials.json";
    password = (JSON.parse(readFileSync(file, "utf8")) as Record<string, string>)[role];
  } catch {
    /* the caller reports it */
  }
  return password ? signIn(EMAIL, password, signal) : null;
}

/** Page load: PAGE_USERS users load the dashboard with one signed-in session. */
async function pageLoad(role: string, signal: AbortSignal): Promise<Row[]> {
  const cookie = await demoSession(role, signal);
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

/** The objective whose name contains `name` (else the first), through the API. */
async function objectiveByName(init: Init, name: string): Promise<{ id: string; name: string }> {
  const list = await call(init, "/api/v1/objectives");
  const objectives = list.json.objectives as Array<{ id: string; name: string }>;
  return objectives.find((o) => o.name.includes(name)) ?? objectives[0];
}

interface MeasurementTimes {
  id: string;
  status: string;
  createdAt: Date;
  startedAt: Date | null;
  finishedAt: Date | null;
}

/** Status and queue timestamps of measurements, from their rows. */
function measurementTimes(db: Db, ids: string[]): Promise<MeasurementTimes[]> {
  return db
    .select({
      id: measurements.id,
      status: measurements.status,
      createdAt: measurements.createdAt,
      startedAt: measurements.startedAt,
      finishedAt: measurements.finishedAt,
    })
    .from(measurements)
    .where(inArray(measurements.id, ids));
}

/** Queue throughput: QUEUE_K measurements of one small stack at once, timed from their rows. */
async function queueLoad(db: Db, inits: Init[], signal: AbortSignal, stopAt: number): Promise<Row[]> {
  const objective = await objectiveByName(inits[0], "1.40 oil");
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
  let state: MeasurementTimes[] = [];
  while (ids.length) {
    state = await measurementTimes(db, ids);
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

/** The ~105 MB stack of product.bench.ts, generated once (about 25 s) and kept in a cache file. */
function bigStackFile(): { file: string; generatedS: number | null } {
  const dir = process.env.LOAD_CACHE_DIR ?? path.join(tmpdir(), "beadbench-bench-cache");
  const [nz, ny, nx] = BIG_STACK.shape;
  const file = path.join(dir, `beads-${nz}x${ny}x${nx}-${BIG_STACK.beadCount}-seed${BIG_STACK.seed}.tif`);
  if (existsSync(file)) return { file, generatedS: null };
  const t0 = performance.now();
  const demo = makeDemoBeadStack({
    na: 1.4,
    immersionRi: 1.518,
    sampleRi: 1.518,
    emissionWavelengthNm: 520,
    ...BIG_STACK,
  });
  mkdirSync(dir, { recursive: true });
  // Written beside and renamed: a run stopped half-way leaves no truncated file to reuse.
  const part = `${file}.${process.pid}.part`;
  writeFileSync(part, demo.tiff);
  renameSync(part, file);
  return { file, generatedS: (performance.now() - t0) / 1000 };
}

/** Resident memory of a process in bytes (Linux; VmHWM: its peak since it started), or NaN. */
function rssBytes(pid: number | undefined, field: "VmRSS" | "VmHWM" = "VmRSS"): number {
  if (!pid) return NaN;
  try {
    const m = new RegExp(`${field}:\\s+(\\d+) kB`).exec(readFileSync(`/proc/${pid}/status`, "utf8"));
    return m ? Number(m[1]) * 1024 : NaN;
  } catch {
    return NaN;
  }
}

/** CPU time (user + system, all threads) of a process in seconds (Linux, 100 ticks/s), or NaN. */
function cpuSeconds(pid: number | undefined): number {
  if (!pid) return NaN;
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, "utf8");
    const f = stat.slice(stat.lastIndexOf(")") + 2).split(" "); // f[0] is field 3 (state)
    return (Number(f[11]) + Number(f[12])) / 100; // fields 14 and 15: utime, stime
  } catch {
    return NaN;
  }
}

/**
 * The web server's and the worker's process ids, from /proc (Linux, same user): the process
 * listening on the server's port, and beside it (same parent, as `npm start` runs them) the
 * innermost process running src/worker/index.ts (tsx runs the worker in a child of its CLI).
 * Only process ids, parents, command lines and socket links are read.
 */
function serverProcesses(port: number): { web?: number; worker?: number } {
  try {
    const inodes = new Set<string>();
    for (const f of ["/proc/net/tcp", "/proc/net/tcp6"]) {
      if (!existsSync(f)) continue;
      for (const line of readFileSync(f, "utf8").trim().split("\n").slice(1)) {
        const cols = line.trim().split(/\s+/);
        if (cols[3] === "0A" && parseInt(cols[1].split(":").pop()!, 16) === port) inodes.add(cols[9]);
      }
    }
    const pids = readdirSync("/proc")
      .filter((d) => /^\d+$/.test(d))
      .map(Number);
    const parentOf = new Map<number, number>();
    for (const pid of pids) {
      try {
        const stat = readFileSync(`/proc/${pid}/stat`, "utf8");
        parentOf.set(pid, Number(stat.slice(stat.lastIndexOf(")") + 2).split(" ")[1]));
      } catch {
        /* gone */
      }
    }
    const web = pids.find((pid) => {
      try {
        return readdirSync(`/proc/${pid}/fd`).some((fd) => {
          try {
            const m = /^socket:\[(\d+)\]$/.exec(readlinkSync(`/proc/${pid}/fd/${fd}`));
            return m !== null && inodes.has(m[1]);
          } catch {
            return false;
          }
        });
      } catch {
        return false;
      }
    });
    if (!web) return {};
    const root = parentOf.get(web);
    const descends = (pid: number) => {
      for (let p = parentOf.get(pid); p && p > 1; p = parentOf.get(p)) if (p === root) return true;
      return false;
    };
    const workers = pids.filter((pid) => {
      try {
        const cmd = readFileSync(`/proc/${pid}/cmdline`, "utf8");
        return cmd.includes("src/worker/index.ts") && descends(pid);
      } catch {
        return false;
      }
    });
    const worker = workers.find((pid) => !workers.some((other) => parentOf.get(other) === pid));
    return { web, worker };
  } catch {
    return {};
  }
}

interface BrowseTarget {
  label: string;
  url: string;
  kind: "page" | "api";
}

/**
 * BROWSE_USERS users, each with its own token for the API and the one signed-in session for
 * pages, request the targets in turn with a think time between requests (LOAD_THINK_MS ± 50 %),
 * until `done()`, the deadline, MAX_REQUESTS_PER_USER or the hard stop, whichever comes first.
 */
async function browse(
  tag: string,
  targets: BrowseTarget[],
  users: Array<{ page: Init; api: Init }>,
  opts: { done: () => boolean; deadline: number; signal: AbortSignal },
): Promise<Row[]> {
  const stats = targets.map((t) => newStats(t.label, t.url));
  const t0 = performance.now();
  const cpu0 = process.cpuUsage();
  const user = async ({ page, api }: { page: Init; api: Init }, first: number) => {
    for (let n = 0; n < MAX_REQUESTS_PER_USER; n++) {
      if (opts.done() || performance.now() >= opts.deadline || opts.signal.aborted) return;
      const i = (first + n) % targets.length;
      const s = stats[i];
      const init = targets[i].kind === "page" ? page : api;
      const t = performance.now();
      try {
        const signal = AbortSignal.any([opts.signal, AbortSignal.timeout(REQUEST_TIMEOUT_MS)]);
        const res = await fetch(s.url, { ...init, signal });
        await res.arrayBuffer();
        s.statuses.set(res.status, (s.statuses.get(res.status) ?? 0) + 1);
        if (res.status < 300) s.ms.push(performance.now() - t);
      } catch {
        s.failed++;
      }
      await sleep(THINK_MS * (0.5 + Math.random()), undefined, { signal: opts.signal }).catch(() => {});
    }
  };
  await Promise.all(users.map((u, i) => user(u, i)));
  return summarize(tag, stats, (performance.now() - t0) / 1000, process.cpuUsage(cpu0), () => undefined);
}

/** Measurements waiting for or in analysis, in any facility (the worker is shared). */
async function activeMeasurements(db: Db): Promise<number> {
  const rows = await db
    .select({ id: measurements.id })
    .from(measurements)
    .where(inArray(measurements.status, ["queued", "running"]));
  return rows.length;
}

/**
 * Mixed load (issue 8 item 6): BROWSE_USERS users browse pages and the API while MIXED_K
 * measurements of the ~105 MB stack run; first the same browsing with nothing queued, as a baseline.
 */
async function mixedLoad(
  db: Db,
  inits: Init[],
  role: string,
  target: { id: string; objectiveId: string },
  stackFile: string,
  signal: AbortSignal,
  stopAt: number,
): Promise<Row[]> {
  const cookie = await demoSession(role, signal);
  if (!cookie) {
    console.log("load.bench: could not sign in (no demo password file, or refused); mixed load skipped.");
    return [];
  }
  const page: Init = { redirect: "manual", headers: { Cookie: cookie } };
  const logbookUrl = `${BASE}/instruments/objectives/${target.objectiveId}`;
  const check = await fetch(logbookUrl, { ...page, signal });
  if (check.status !== 200 || !(await check.text()).includes("Logbook")) {
    console.log(
      `load.bench: the objective page answered ${check.status} without its logbook; mixed skipped.`,
    );
    return [];
  }
  const targets: BrowseTarget[] = [
    { label: "page dashboard", url: `${BASE}/dashboard`, kind: "page" },
    { label: "page objective logbook", url: logbookUrl, kind: "page" },
    { label: "api objectives", url: `${BASE}/api/v1/objectives`, kind: "api" },
    { label: "api trend", url: `${BASE}/api/v1/objectives/${target.objectiveId}/trend`, kind: "api" },
    { label: "api measurement", url: `${BASE}/api/v1/measurements/${target.id}`, kind: "api" },
    {
      label: "api beads csv",
      url: `${BASE}/api/v1/measurements/${target.id}/beads?format=csv`,
      kind: "api",
    },
  ];
  const users = inits.slice(0, BROWSE_USERS).map((api) => ({ page, api }));
  const rows: Row[] = [];
  const mb = (bytes: number) => bytes / 1e6;

  // Upload once through the API (a second run sends the same bytes: the server answers 200, duplicate).
  const blob = await openAsBlob(stackFile, { type: "image/tiff" });
  const form = new FormData();
  form.append("file", blob, "load-bench-beads-200x512x512.tif");
  const tUp = performance.now();
  const stack = await call({ ...inits[0], signal }, "/api/v1/stacks", { method: "POST", body: form });
  const uploadS = (performance.now() - tUp) / 1000;
  if (stack.status !== 201 && stack.status !== 200) {
    console.log(
      `load.bench: the ${mb(blob.size).toFixed(0)} MB upload answered ${stack.status}; mixed skipped.`,
    );
    return [];
  }
  rows.push(
    { name: "mixed: stack size", value: mb(blob.size), unit: "MB" },
    {
      name: `mixed: upload, multipart POST (${stack.status === 201 ? "new stack" : "duplicate, reused"})`,
      value: uploadS,
      unit: "s",
    },
  );

  // Baseline: the same browsing with no analysis of ours queued (others' are counted).
  const procs = serverProcesses(Number(new URL(BASE).port || 80));
  if (!procs.worker)
    console.log("load.bench: worker process not found in /proc; its memory and CPU are not reported.");
  // CPU the web server and the worker used over a span, in % of one core.
  const cpuMark = () => ({
    t: performance.now(),
    web: cpuSeconds(procs.web),
    worker: cpuSeconds(procs.worker),
  });
  const cpuRows = (tag: string, from: ReturnType<typeof cpuMark>): Row[] => {
    const to = cpuMark();
    const pct = (a: number, b: number) => ((b - a) / ((to.t - from.t) / 1000)) * 100;
    return [
      { name: `${tag}: web server CPU`, value: pct(from.web, to.web), unit: "% core" },
      { name: `${tag}: worker CPU`, value: pct(from.worker, to.worker), unit: "% core" },
    ];
  };
  const activeBefore = await activeMeasurements(db);
  const cpuIdle = cpuMark();
  const tBase = performance.now();
  rows.push(
    ...(await browse(`mixed idle ${BROWSE_USERS} users`, targets, users, {
      done: () => false,
      deadline: Math.min(tBase + BASELINE_SECONDS * 1000, stopAt),
      signal,
    })),
    ...cpuRows(`mixed idle ${BROWSE_USERS} users`, cpuIdle),
  );
  const activeAfter = await activeMeasurements(db);
  rows.push(
    {
      name: "mixed idle: measurements queued/running at its start",
      value: activeBefore,
      unit: "count",
      target: "0",
    },
    {
      name: "mixed idle: measurements queued/running at its end",
      value: activeAfter,
      unit: "count",
      target: "0",
    },
  );
  const workerRssIdle = rssBytes(procs.worker);
  const webRssIdle = rssBytes(procs.web);

  // MIXED_K sample measurements at once, then browse until the last one is done.
  const body = JSON.stringify({
    stackId: stack.json.id,
    objectiveId: (await objectiveByName(inits[0], "1.40 oil")).id,
    purpose: "sample",
    sampleRi: 1.518,
    emissionWavelengthNm: 520,
    modality: "widefield",
    beadDiameterNm: 100,
  });
  const load0 = loadavg()[0];
  const cpuBusy = cpuMark();
  const created = await Promise.all(
    inits
      .slice(0, MIXED_K)
      .map((init) =>
        call({ ...init, signal }, "/api/v1/measurements", { method: "POST", body, type: "application/json" }),
      ),
  );
  const ids = created.flatMap((c) => (typeof c.json.id === "string" ? [c.json.id] : []));
  const terminal = ["done", "failed", "cancelled"];
  let finished = ids.length === 0;
  let workerRssPeak = workerRssIdle;
  let webRssPeak = webRssIdle;
  let loadPeak = load0;
  const during = browse(`mixed +${MIXED_K} analyses ${BROWSE_USERS} users`, targets, users, {
    done: () => finished,
    deadline: stopAt,
    signal,
  });
  let state: MeasurementTimes[] = [];
  try {
    while (ids.length) {
      state = await measurementTimes(db, ids);
      workerRssPeak = Math.max(workerRssPeak, rssBytes(procs.worker) || 0);
      webRssPeak = Math.max(webRssPeak, rssBytes(procs.web) || 0);
      loadPeak = Math.max(loadPeak, loadavg()[0]);
      if (state.every((s) => terminal.includes(s.status))) break;
      if (signal.aborted || performance.now() >= stopAt) break;
      await sleep(500);
    }
  } finally {
    finished = true;
  }
  rows.push(...(await during), ...cpuRows(`mixed +${MIXED_K} analyses ${BROWSE_USERS} users`, cpuBusy));
  const load1 = loadavg()[0];

  // Leave no queued work behind (a running analysis still runs to its end in the worker).
  const unfinished = state.filter((s) => !terminal.includes(s.status));
  const noSignal = { ...inits[0], signal: undefined };
  for (const s of unfinished) await call(noSignal, `/api/v1/measurements/${s.id}/cancel`, { method: "POST" });

  const seconds = (from: Date, to: Date) => (to.getTime() - from.getTime()) / 1000;
  const done = state.filter((s) => s.status === "done" && s.finishedAt && s.startedAt);
  rows.push(
    { name: `mixed: measurements created (of ${MIXED_K})`, value: ids.length, unit: "count" },
    { name: "mixed: done", value: done.length, unit: "count", target: String(MIXED_K) },
    {
      name: "mixed: failed",
      value: state.filter((s) => s.status === "failed").length,
      unit: "count",
      target: "0",
    },
    { name: "mixed: not done at the stop (cancelled)", value: unfinished.length, unit: "count" },
  );
  // In the order the worker started them (created within milliseconds; the queue's order is its own).
  const started = (s: MeasurementTimes) => s.startedAt?.getTime() ?? Infinity;
  [...state]
    .sort((a, b) => started(a) - started(b))
    .forEach((s, i) => {
      if (s.startedAt)
        rows.push({
          name: `mixed: measurement ${i + 1} queue wait (created → started)`,
          value: seconds(s.createdAt, s.startedAt),
          unit: "s",
        });
      if (s.startedAt && s.finishedAt && s.status === "done")
        rows.push({
          name: `mixed: measurement ${i + 1} analysis (started → done)`,
          value: seconds(s.startedAt, s.finishedAt),
          unit: "s",
        });
    });
  if (done.length) {
    // A real analysis, not an early exit: the stack has BIG_STACK.beadCount beads, all usable.
    const summaries = await db
      .select({ summary: measurements.summary })
      .from(measurements)
      .where(
        inArray(
          measurements.id,
          done.map((s) => s.id),
        ),
      );
    const used = summaries.map((r) => (r.summary as { beads?: { used?: number } } | null)?.beads?.used ?? 0);
    rows.push({
      name: "mixed: beads used, fewest of the done measurements",
      value: Math.min(...used),
      unit: "beads",
      target: `${BIG_STACK.beadCount}`,
    });
  }
  if (done.length && state.length) {
    const firstCreated = new Date(Math.min(...state.map((s) => s.createdAt.getTime())));
    const lastDone = new Date(Math.max(...done.map((s) => s.finishedAt!.getTime())));
    rows.push(
      { name: "mixed: first created → last done", value: seconds(firstCreated, lastDone), unit: "s" },
      {
        name: "mixed: throughput",
        value: (done.length * mb(blob.size)) / seconds(firstCreated, lastDone),
        unit: "MB/s",
      },
    );
    // Other people's analyses share the one worker: say if any ran in the window.
    const others = await db
      .select({ id: measurements.id })
      .from(measurements)
      .where(
        and(
          notInArray(measurements.id, ids),
          isNotNull(measurements.startedAt),
          lt(measurements.startedAt, lastDone),
          or(isNull(measurements.finishedAt), gt(measurements.finishedAt, firstCreated)),
        ),
      );
    rows.push({
      name: "mixed: others' measurements analysed in that window",
      value: others.length,
      unit: "count",
    });
  }
  rows.push(
    { name: "mixed: worker RSS, idle", value: mb(workerRssIdle), unit: "MB" },
    { name: "mixed: worker RSS, peak sampled every 0.5 s", value: mb(workerRssPeak), unit: "MB" },
    {
      name: "mixed: worker peak RSS since it started (VmHWM)",
      value: mb(rssBytes(procs.worker, "VmHWM")),
      unit: "MB",
    },
    { name: "mixed: web server RSS, idle", value: mb(webRssIdle), unit: "MB" },
    { name: "mixed: web server RSS, peak sampled every 0.5 s", value: mb(webRssPeak), unit: "MB" },
    { name: "mixed: load average (1 min) at the first measurement", value: load0, unit: "" },
    { name: "mixed: load average (1 min), highest sampled", value: loadPeak, unit: "" },
    { name: "mixed: load average (1 min) at the end", value: load1, unit: "" },
  );
  return rows;
}

/** A phase that fails (e.g. cut by the hard stop) is reported and leaves the others' rows. */
async function phase(name: string, rows: Promise<Row[]>): Promise<Row[]> {
  try {
    return await rows;
  } catch (e) {
    const cause = (e as Error).cause as Error | undefined;
    console.log(`load.bench: ${name} stopped: ${(e as Error).message}${cause ? ` (${cause.message})` : ""}`);
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
  // Before any request: generating blocks this process for ~25 s, and a kept-alive connection the
  // server closes meanwhile would fail the next request ("other side closed").
  let bigStack: string | undefined;
  if (PHASES.has("mixed")) {
    const { file, generatedS } = bigStackFile();
    bigStack = file;
    console.log(
      generatedS === null
        ? `load.bench: mixed load uses the cached stack ${file}.`
        : `load.bench: generated ${file} in ${generatedS.toFixed(1)} s (cached for the next run).`,
    );
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
  let mixedTimer: NodeJS.Timeout | undefined;
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
    const tokenCount = Math.max(
      PHASES.has("read") ? Math.max(...READ_USERS) : 0,
      PHASES.has("queue") ? QUEUE_K : 0,
      PHASES.has("mixed") ? BROWSE_USERS : 0,
    );
    for (let i = 0; i < tokenCount; i++) {
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
    if (!target)
      console.log("load.bench: no finished measurement in the facility; read and mixed load skipped.");
    for (const n of target && PHASES.has("read") ? READ_USERS : []) {
      if (!signal.aborted) rows.push(...(await readLoad(inits.slice(0, n), target, signal)));
    }
    if (PHASES.has("pages") && !signal.aborted)
      rows.push(...(await phase("page load", pageLoad(m.role, signal))));
    const stopAt = started + HARD_STOP_MS - 3000;
    if (PHASES.has("queue") && !signal.aborted)
      rows.push(...(await phase("queue", queueLoad(db, inits, signal, stopAt))));
    if (signal.aborted) console.log("load.bench: the hard stop cut the run short.");
    clearTimeout(timer);

    if (PHASES.has("mixed") && target && bigStack) {
      // Its own hard stop, long enough for MIXED_K analyses of the big stack on a small machine.
      const mixedStop = new AbortController();
      mixedTimer = setTimeout(() => mixedStop.abort(), MIXED_STOP_MS);
      const mixedAt = performance.now() + MIXED_STOP_MS - 5000;
      const mixedInits = inits.map((init) => ({ ...init, signal: mixedStop.signal }));
      rows.push(
        ...(await phase(
          "mixed",
          mixedLoad(db, mixedInits, m.role, target, bigStack, mixedStop.signal, mixedAt),
        )),
      );
      if (mixedStop.signal.aborted) console.log("load.bench: the mixed load's hard stop cut it short.");
    }
    return rows;
  } finally {
    clearTimeout(timer);
    clearTimeout(mixedTimer);
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
