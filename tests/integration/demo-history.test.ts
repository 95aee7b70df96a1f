/**
 * The demo history as `npm start` seeds it (`src/scripts/seed.ts` with the history on), run
 * through the real analysis (the worker's handler, two at a time), then read back through the
 * services the dashboard, the logbook, "status on a date" and the service-visit report use.
 * The story it must tell (README of the demo, `src/scripts/seed-history.ts`): the 40× air lens
 * is overdue; the 63× oil lens is on "watch" because its lateral ratio has drifted more than 3σ
 * above its baseline block; the 100× oil lens went out of spec and a signed-off repair visit
 * restored it; the 100× oil and 60× water lenses are in spec; the glycerol and silicone lenses
 * have no data. Seeding again must change nothing.
 *
 * Runs in a database of its own (created from DATABASE_URL's server, dropped at the end): the
 * seed writes the demo facility, which the browser tests of `npm test` seed without history in
 * the shared test database afterwards. Invented data throughout.
 */
import { spawn } from "node:child_process";
import { mkdtempSync, readdirSync, rmSync, statSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { sql } from "drizzle-orm";
import { Client } from "pg";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

const repoRoot = path.resolve(__dirname, "../..");
const baseUrl = process.env.DATABASE_URL;
const dbName = `bb_demo_history_${process.pid}_${Date.now().toString(36)}`;
const dbUrl = (() => {
  if (!baseUrl) return "";
  const u = new URL(baseUrl);
  u.pathname = `/${dbName}`;
  return u.toString();
})();
const dataDir = mkdtempSync(path.join(tmpdir(), "bb-demo-history-"));
const passwordsFile = path.join(tmpdir(), `bb-demo-history-${process.pid}-credentials.json`);

// Before anything reads the environment (getEnv caches it at first use). Mail goes to the
// outbox file in dataDir (the failed as-found check sends an out-of-spec alert).
process.env.DATABASE_URL = dbUrl;
process.env.DATA_DIR = dataDir;
process.env.SMTP_URL = "";

/** Services are imported after the environment is set. */
const modules = async () => ({
  db: await import("@/server/db/client"),
  schema: await import("@/server/db/schema"),
  migrator: await import("drizzle-orm/node-postgres/migrator"),
  boss: await import("@/server/queue/boss"),
  dashboard: await import("@/server/services/dashboard"),
  logbook: await import("@/server/services/logbook"),
  overview: await import("@/server/services/objective-overview"),
  statusOnDate: await import("@/server/services/status-on-date"),
  visits: await import("@/server/services/service-visits"),
  demo: await import("@/server/services/demo-data"),
  analyze: await import("@/worker/handlers/analyze-measurement"),
});
let m: Awaited<ReturnType<typeof modules>>;

type Actor = import("@/server/auth/permissions").Actor;
type DashboardObjective = import("@/server/services/dashboard").DashboardObjective;

const DAY_MS = 86_400_000;
const timings: Record<string, number> = {};
let admin: Actor;
let seedOutput = "";

/** `src/scripts/seed.ts` in its own process, with the history on; resolves with its output. */
function runSeed(): Promise<string> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ["node_modules/tsx/dist/cli.mjs", "src/scripts/seed.ts"], {
      cwd: repoRoot,
      env: {
        ...process.env,
        DATABASE_URL: dbUrl,
        DATA_DIR: dataDir,
        SMTP_URL: "",
        DEMO_PASSWORDS_FILE: passwordsFile,
        DEMO_HISTORY: "1",
      },
      stdio: ["ignore", "pipe", "pipe"],
    });
    let out = "";
    child.stdout.on("data", (c: Buffer) => (out += c.toString()));
    child.stderr.on("data", (c: Buffer) => (out += c.toString()));
    child.on("error", reject);
    child.on("exit", (code) =>
      code === 0 ? resolve(out) : reject(new Error(`seed exited with ${code}:\n${out}`)),
    );
  });
}

/** Analyse every queued measurement with the worker's handler, `parallel` at a time. */
async function drainQueue(parallel: number): Promise<number> {
  const db = m.db.getDb();
  const queued = await db
    .select({ id: m.schema.measurements.id })
    .from(m.schema.measurements)
    .where(sql`${m.schema.measurements.status} = 'queued'`);
  let next = 0;
  const lane = async () => {
    while (next < queued.length) {
      const { id } = queued[next++]!;
      await m.analyze.analyzeMeasurement({ measurementId: id }, { retryCount: 0, retryLimit: 0 });
    }
  };
  await Promise.all(Array.from({ length: parallel }, lane));
  return queued.length;
}

/** Every public table's row count and a hash of its rows, the queue's jobs, the stored files. */
async function fingerprint(): Promise<Record<string, string>> {
  const db = m.db.getDb();
  const out: Record<string, string> = {};
  const tables = await db.execute<{ name: string }>(
    sql`SELECT table_name AS name FROM information_schema.tables
        WHERE table_schema = 'public' AND table_type = 'BASE TABLE' ORDER BY 1`,
  );
  for (const { name } of tables.rows) {
    const r = await db.execute<{ n: number; h: string }>(
      sql`SELECT count(*)::int AS n, md5(coalesce(string_agg(t::text, E'\n' ORDER BY t::text), '')) AS h
          FROM ${sql.identifier(name)} t`,
    );
    out[name] = `${r.rows[0]!.n} rows ${r.rows[0]!.h}`;
  }
  const jobs = await db.execute<{ name: string; state: string; n: number }>(
    sql`SELECT name, state, count(*)::int AS n FROM pgboss.job GROUP BY 1, 2 ORDER BY 1, 2`,
  );
  out["pgboss.job"] = JSON.stringify(jobs.rows);
  const files: string[] = [];
  const walk = (dir: string) => {
    for (const e of readdirSync(dir, { withFileTypes: true })) {
      const p = path.join(dir, e.name);
      if (e.isDirectory()) walk(p);
      else files.push(`${path.relative(dataDir, p)} ${statSync(p).size}`);
    }
  };
  walk(dataDir);
  out.files = files.sort().join("\n");
  return out;
}

let before: Record<string, string> = {};

beforeAll(async () => {
  if (!baseUrl) throw new Error("DATABASE_URL is not set: integration tests need a PostgreSQL server.");
  const pg = new Client({ connectionString: baseUrl });
  await pg.connect();
  await pg.query(`CREATE DATABASE "${dbName}"`);
  await pg.end();
  m = await modules();
  await m.migrator.migrate(m.db.getDb(), { migrationsFolder: path.join(repoRoot, "drizzle") });
  writeFileSync(
    passwordsFile,
    JSON.stringify({
      admin: "demo-history-admin-1",
      staff: "demo-history-staff-1",
      researcher: "demo-history-research-1",
      engineer: "demo-history-engineer-1",
    }),
    { mode: 0o600 },
  );

  let t0 = Date.now();
  seedOutput = await runSeed();
  timings.seedS = (Date.now() - t0) / 1000;
  t0 = Date.now();
  timings.checks = await drainQueue(2);
  timings.analysisS = (Date.now() - t0) / 1000;

  const db = m.db.getDb();
  const [facility] = await db
    .select()
    .from(m.schema.facilities)
    .where(sql`${m.schema.facilities.slug} = ${m.demo.DEMO_FACILITY.slug}`);
  const [membership] = await db
    .select()
    .from(m.schema.memberships)
    .where(
      sql`${m.schema.memberships.facilityId} = ${facility!.id} AND ${m.schema.memberships.role} = 'admin'`,
    );
  admin = { userId: membership!.userId, facilityId: facility!.id, role: "admin", via: "session" };
  console.log(
    `[demo-history] seed ${timings.seedS.toFixed(1)} s, ${timings.checks} checks analysed in ${timings.analysisS.toFixed(1)} s`,
  );
}, 600_000);

afterAll(async () => {
  if (m) {
    await m.boss.stopBoss().catch(() => {});
    await m.db.closeDb().catch(() => {});
  }
  if (baseUrl) {
    const pg = new Client({ connectionString: baseUrl });
    await pg.connect();
    await pg.query(`DROP DATABASE IF EXISTS "${dbName}" WITH (FORCE)`);
    await pg.end();
  }
  rmSync(dataDir, { recursive: true, force: true });
  rmSync(passwordsFile, { force: true });
}, 60_000);

/** The dashboard row of the objective whose name matches. */
async function dashboardRow(name: RegExp): Promise<DashboardObjective> {
  const { objectives } = await m.dashboard.getDashboard(m.db.getDb(), admin);
  const rows = objectives.filter((o) => name.test(o.name));
  expect(rows, `one objective named like ${name}`).toHaveLength(1);
  return rows[0]!;
}

/** Centre and σ = MR̄/d₂ of an individuals chart, computed here from the values. */
function individualsLimits(values: number[]) {
  const centre = values.reduce((a, b) => a + b, 0) / values.length;
  const ranges = values.slice(1).map((v, i) => Math.abs(v - values[i]!));
  // Source: NIST/SEMATECH e-Handbook of Statistical Methods §6.3.2.2 (σ̂ = MR̄/d₂, d₂ = 1.128 for n = 2).
  const sigma = ranges.reduce((a, b) => a + b, 0) / ranges.length / 1.128;
  return { centre, sigma };
}

/** Size of the baseline block: at least 5 of the epoch's first checks, growing to 20 (DEVELOPERS.md, Control limits). */
const baselineBlock = (n: number) => (n <= 5 ? n : Math.max(5, Math.min(20, Math.floor(n / 2))));

describe("the demo history", () => {
  it("queues about a year of monthly checks for four lenses and every one is analysed", async () => {
    expect(seedOutput).toMatch(/queued \d+ invented monthly checks/);
    const db = m.db.getDb();
    const rows = await db.execute<{ name: string; status: string; n: number; first: Date; last: Date }>(
      sql`SELECT o.name, m.status, count(*)::int AS n, min(m.acquired_at) AS first, max(m.acquired_at) AS last
          FROM measurements m JOIN objectives o ON o.id = m.objective_id
          WHERE m.facility_id = ${admin.facilityId} GROUP BY 1, 2 ORDER BY 1`,
    );
    expect(rows.rows.map((r) => r.status)).toEqual(rows.rows.map(() => "done"));
    expect(rows.rows).toHaveLength(4);
    expect(rows.rows.reduce((a, r) => a + r.n, 0)).toBe(timings.checks);
    for (const r of rows.rows) {
      // About a year of monthly checks: the first more than 12 months ago, about a month apart.
      expect(r.n, r.name).toBeGreaterThanOrEqual(11);
      expect((Date.now() - new Date(r.first).getTime()) / DAY_MS, r.name).toBeGreaterThan(360);
      const spanDays = (new Date(r.last).getTime() - new Date(r.first).getTime()) / DAY_MS;
      expect(spanDays / (r.n - 1), `${r.name}: about a month apart`).toBeGreaterThan(25);
      expect(spanDays / (r.n - 1), `${r.name}: about a month apart`).toBeLessThan(35);
    }
    // Every check came out of the real engine with beads and a theory formula.
    const summaries = await db.execute<{ used: number | null; formula: string | null }>(
      sql`SELECT (summary->'beads'->>'used')::int AS used, summary->'theory'->>'formulaId' AS formula
          FROM measurements WHERE facility_id = ${admin.facilityId}`,
    );
    for (const s of summaries.rows) {
      expect(s.used).toBeGreaterThanOrEqual(5);
      expect(s.formula).toBeTruthy();
    }
  });

  it("shows each lens with the status of the story on the dashboard", async () => {
    const { objectives, overdue } = await m.dashboard.getDashboard(m.db.getDb(), admin);
    const status = (name: RegExp) => objectives.find((o) => name.test(o.name))?.status.status;
    expect(status(/^40×.*air$/)).toBe("overdue");
    expect(status(/^63×.*oil$/)).toBe("watch");
    expect(status(/^100×.*oil$/)).toBe("in spec");
    expect(status(/^60×.*water$/)).toBe("in spec");
    expect(status(/glycerol$/)).toBe("no data");
    expect(status(/silicone$/)).toBe("no data");
    expect(objectives).toHaveLength(6);
    expect(overdue.map((o) => o.name)).toEqual([objectives.find((o) => /^40×.*air$/.test(o.name))!.name]);
    // The most urgent first: overdue, then watch, then no data, then in spec.
    expect(objectives.map((o) => o.status.status)).toEqual([
      "overdue",
      "watch",
      "no data",
      "no data",
      "in spec",
      "in spec",
    ]);
  });

  it("40× air: overdue only because its last check is older than the interval, not because of its optics", async () => {
    const row = await dashboardRow(/^40×.*air$/);
    const trend = await m.logbook.getObjectiveTrend(m.db.getDb(), admin, row.id);
    const last = trend.points[trend.points.length - 1]!;
    const ageDays = (Date.now() - new Date(last.acquiredAt).getTime()) / DAY_MS;
    const [objective] = await m.db
      .getDb()
      .select()
      .from(m.schema.objectives)
      .where(sql`${m.schema.objectives.id} = ${row.id}`);
    expect(ageDays).toBeGreaterThan(objective!.checkIntervalDays);
    expect(row.status.reason).toContain(`${Math.floor(ageDays)} days ago`);
    expect(row.status.nextDueAt!.getTime()).toBeLessThan(Date.now());
    expect(last.lateralRatio!).toBeLessThan(objective!.lateralRatioLimit);
    expect(last.axialRatio!).toBeLessThan(objective!.axialRatioLimit);
    // Steady optics: no alarm on its latest point.
    const n = trend.charts.lateral.n;
    expect(trend.charts.lateral.hits.filter((h) => h.index === n - 1 && h.level === "alarm")).toEqual([]);
  });

  it("63× oil: on watch, the lateral ratio more than 3σ above the limits of its baseline block, still within spec", async () => {
    const row = await dashboardRow(/^63×.*oil$/);
    const { trend, objective } = await m.overview.getObjectiveOverview(m.db.getDb(), admin, row.id);
    expect(trend.status.status).toBe("watch");
    expect(trend.status.reason).toMatch(/^Lateral ratio: .*3σ/);

    // The chart's limits come from the epoch's first checks only (Phase I), recomputed here.
    const epoch = trend.points.filter((p) => p.epoch === trend.currentEpoch);
    expect(epoch[0]!.purpose).toBe("baseline");
    const lateral = epoch.map((p) => p.lateralRatio!);
    const block = baselineBlock(lateral.length);
    const { centre, sigma } = individualsLimits(lateral.slice(0, block));
    expect(trend.charts.lateral.centre!).toBeCloseTo(centre, 12);
    expect(trend.charts.lateral.sigma!).toBeCloseTo(sigma, 12);
    expect(trend.charts.lateral.upper3!).toBeCloseTo(centre + 3 * sigma, 12);
    expect(trend.charts.lateral.provisional).toBe(block < 20);

    const latest = lateral[lateral.length - 1]!;
    expect(latest).toBeGreaterThan(centre + 3 * sigma);
    // Source: QC-PRACTICE.md §3.3 (Westgard 1₃s: one point beyond 3σ is an alarm).
    expect(trend.charts.lateral.hits).toContainEqual(
      expect.objectContaining({ rule: "1-3s", level: "alarm", index: lateral.length - 1 }),
    );
    expect(latest).toBeLessThan(objective.lateralRatioLimit);
    expect(epoch[epoch.length - 1]!.axialRatio!).toBeLessThan(objective.axialRatioLimit);
    expect(row.ratios!.lateral).toBeCloseTo(latest, 12);
    // Every baseline-block check sits inside the limits: the drift is new.
    for (const v of lateral.slice(0, block)) expect(v).toBeLessThanOrEqual(centre + 3 * sigma);

    // A drift, not a jump: rising over the last months (Theil–Sen slope with its interval above 0).
    expect(trend.slopePerMonth.lateral.slopeLow!).toBeGreaterThan(0);
    const tail = lateral.slice(-4);
    expect(tail).toEqual([...tail].sort((a, b) => a - b));

    // The logbook: the baseline started at installation, and the oil was changed before the drift.
    const kinds = trend.events.map((e) => e.kind);
    expect(kinds).toEqual(expect.arrayContaining(["baseline_start", "immersion_changed"]));
    const oil = trend.events.find((e) => e.kind === "immersion_changed")!;
    const firstAlarm = Math.min(
      ...trend.charts.lateral.hits.filter((h) => h.level === "alarm").map((h) => h.index),
    );
    expect(new Date(oil.occurredAt).getTime()).toBeLessThan(
      new Date(epoch[firstAlarm]!.acquiredAt).getTime(),
    );
    expect(new Date(oil.occurredAt).getTime()).toBeGreaterThan(
      new Date(epoch[block - 1]!.acquiredAt).getTime(),
    );
  });

  it("100× oil: out of spec on the day of the failed check, in spec today", async () => {
    const row = await dashboardRow(/^100×.*oil$/);
    const db = m.db.getDb();
    const { trend, objective } = await m.overview.getObjectiveOverview(db, admin, row.id);
    const limits = { lateral: objective.lateralRatioLimit, axial: objective.axialRatioLimit };
    const failed = trend.points.filter(
      (p) => (p.lateralRatio ?? 0) >= limits.lateral || (p.axialRatio ?? 0) >= limits.axial,
    );
    expect(failed).toHaveLength(1);
    expect(failed[0]!.purpose).toBe("pre-service");
    const day = failed[0]!.acquiredAt.slice(0, 10);
    const then = await m.statusOnDate.getStatusOnDate(db, admin, row.id, day);
    expect(then.status).toBe("out of spec");
    expect(then.check!.measurementId).toBe(failed[0]!.measurementId);
    expect(then.paragraph).toContain('"out of spec"');

    const today = await m.statusOnDate.getStatusOnDate(
      db,
      admin,
      row.id,
      new Date().toISOString().slice(0, 10),
    );
    expect(today.status).toBe("in spec");
    expect(row.status.status).toBe("in spec");
    expect(row.ratios!.lateral!).toBeLessThan(limits.lateral);
    expect(row.ratios!.axial!).toBeLessThan(limits.axial);
    // The repair opened a new epoch at the as-left check; the old limits no longer apply.
    const postService = trend.points.find((p) => p.purpose === "post-service")!;
    expect(postService.epoch).toBe(trend.currentEpoch);
    expect(failed[0]!.epoch).toBeLessThan(trend.currentEpoch);
    expect(trend.points.filter((p) => p.epoch === trend.currentEpoch)[0]!.measurementId).toBe(
      postService.measurementId,
    );
    // Logbook: cleaned after the failed check, serviced before the as-left check.
    const at = (kind: string) => new Date(trend.events.find((e) => e.kind === kind)!.occurredAt).getTime();
    const t = (p: { acquiredAt: string }) => new Date(p.acquiredAt).getTime();
    expect(at("cleaned")).toBeGreaterThan(t(failed[0]!));
    expect(at("cleaned")).toBeLessThan(at("service"));
    expect(at("service")).toBeLessThan(t(postService));
  });

  it("100× oil: the signed-off repair visit compares as found with as left against the historical baseline", async () => {
    const db = m.db.getDb();
    const row = await dashboardRow(/^100×.*oil$/);
    const visits = await m.visits.listServiceVisits(db, admin);
    const repairs = visits.filter((v) => v.signedOffAt != null);
    expect(repairs).toHaveLength(1);
    const visit = repairs[0]!;
    expect(visit.report).toBeTruthy();
    expect(visit.engineerName).toBeTruthy();

    const report = await m.visits.getServiceVisitReport(db, admin, visit.id);
    const c = report.comparisons.find((x) => x.objectiveId === row.id)!;
    expect(c).toBeDefined();
    expect(c.verdict).toBe("restored");
    expect(visit.signedOffAt!.getTime()).toBeGreaterThan(new Date(c.asLeft!.acquiredAt).getTime());

    // As found: the failed pre-service check; as left: the post-service check.
    const trend = await m.logbook.getObjectiveTrend(db, admin, row.id);
    const byId = new Map(trend.points.map((p) => [p.measurementId, p]));
    expect(byId.get(c.asFound!.measurementId)!.purpose).toBe("pre-service");
    expect(byId.get(c.asLeft!.measurementId)!.purpose).toBe("post-service");
    expect(
      c.asFound!.lateral! >= c.limits.lateral || c.asFound!.axial! >= c.limits.axial,
      "as found is out of spec",
    ).toBe(true);
    expect(c.asLeft!.lateral!).toBeLessThan(c.limits.lateral);
    expect(c.asLeft!.axial!).toBeLessThan(c.limits.axial);

    // The baseline: the checks before the visit, limits from their first block (recomputed here).
    const beforeVisit = trend.points.filter((p) => new Date(p.acquiredAt) < visit.startsAt);
    expect(c.baseline.checks).toBe(beforeVisit.length);
    const block = baselineBlock(beforeVisit.length);
    const lat = individualsLimits(beforeVisit.slice(0, block).map((p) => p.lateralRatio!));
    const ax = individualsLimits(beforeVisit.slice(0, block).map((p) => p.axialRatio!));
    expect(c.baseline.lateral!).toBeCloseTo(lat.centre, 12);
    expect(c.baseline.sigmaLateral!).toBeCloseTo(lat.sigma, 12);
    expect(c.baseline.axial!).toBeCloseTo(ax.centre, 12);
    expect(c.baseline.sigmaAxial!).toBeCloseTo(ax.sigma, 12);
    // Restored = within the limits and within 3σ of that baseline; as found was far outside it.
    expect(c.asLeft!.lateral!).toBeLessThanOrEqual(lat.centre + 3 * lat.sigma);
    expect(c.asLeft!.axial!).toBeLessThanOrEqual(ax.centre + 3 * ax.sigma);
    expect(c.asFound!.lateral!).toBeGreaterThan(lat.centre + 3 * lat.sigma);
    expect(c.reason).toContain(`${beforeVisit.length}-check baseline`);
  });

  it("60× water: in spec, steady, no alarm or warning on its latest check", async () => {
    const row = await dashboardRow(/^60×.*water$/);
    const trend = await m.logbook.getObjectiveTrend(m.db.getDb(), admin, row.id);
    expect(trend.status.status).toBe("in spec");
    for (const chart of [trend.charts.lateral, trend.charts.axial]) {
      expect(chart.centre).not.toBeNull();
      expect(chart.hits.filter((h) => h.index === chart.n - 1)).toEqual([]);
    }
    expect(trend.events).toEqual([]);
    const ageDays =
      (Date.now() - new Date(trend.points[trend.points.length - 1]!.acquiredAt).getTime()) / DAY_MS;
    expect(ageDays).toBeLessThan(30);
  });

  it("glycerol and silicone: no data", async () => {
    for (const name of [/glycerol$/, /silicone$/]) {
      const row = await dashboardRow(name);
      const trend = await m.logbook.getObjectiveTrend(m.db.getDb(), admin, row.id);
      expect(trend.points).toEqual([]);
      expect(row.lastCheckAt).toBeNull();
      expect(row.status.status).toBe("no data");
    }
  });

  it("seeding again changes nothing", async () => {
    before = await fingerprint();
    const output = await runSeed();
    expect(output).toContain("demo data is in place");
    expect(output).not.toMatch(/queued \d+/);
    const after = await fingerprint();
    expect(after).toEqual(before);
    expect(Number(before.measurements!.split(" ")[0])).toBe(timings.checks);
  }, 120_000);
});
