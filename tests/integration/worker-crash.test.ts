/**
 * A worker killed mid-job (SIGKILL while the measurement is detecting or fitting): pg-boss
 * notices the job only when it expires, fails it into a retry, and a fresh worker finishes
 * the measurement once, without duplicate bead rows.
 *
 * Runs in a database of its own (created from DATABASE_URL's server and dropped at the end):
 * real worker processes take every queued job, so sharing a database would let them take other
 * tests' jobs, and other runs' backlog would delay ours. The job expiry is lowered to 15 s
 * (ANALYSIS_JOB_EXPIRE_SECONDS), which also shortens pg-boss's maintenance interval to 3 s.
 */
import { spawn, type ChildProcess } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { sql } from "drizzle-orm";
import { Client } from "pg";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";

const EXPIRE_SECONDS = 15;
const repoRoot = path.resolve(__dirname, "../..");
const baseUrl = process.env.DATABASE_URL;
const dbName = `bb_crash_${process.pid}_${Date.now().toString(36)}`;
const dbUrl = (() => {
  if (!baseUrl) return "";
  const u = new URL(baseUrl);
  u.pathname = `/${dbName}`;
  return u.toString();
})();
const dataDir = mkdtempSync(path.join(tmpdir(), "bb-crash-"));

// Before anything reads the environment (getEnv caches it at first use).
process.env.DATABASE_URL = dbUrl;
process.env.DATA_DIR = dataDir;
process.env.ANALYSIS_JOB_EXPIRE_SECONDS = String(EXPIRE_SECONDS);

/** Services are imported after the environment is set. */
const modules = async () => ({
  db: await import("@/server/db/client"),
  schema: await import("@/server/db/schema"),
  boss: await import("@/server/queue/boss"),
  stacks: await import("@/server/services/stacks"),
  measurements: await import("@/server/services/measurements"),
  exports: await import("@/server/services/exports"),
  storage: await import("@/server/storage/get-storage"),
  helpers: await import("./helpers"),
  migrator: await import("drizzle-orm/node-postgres/migrator"),
});
let m: Awaited<ReturnType<typeof modules>>;

const workers: ChildProcess[] = [];
let log = "";

/** Start `src/worker/index.ts` in its own process and wait for its ready line. */
function startWorker(): Promise<ChildProcess> {
  const child = spawn(process.execPath, ["node_modules/tsx/dist/cli.mjs", "src/worker/index.ts"], {
    cwd: repoRoot,
    env: { ...process.env, DATABASE_URL: dbUrl, DATA_DIR: dataDir, SMTP_URL: "" },
    stdio: ["ignore", "pipe", "pipe"],
    // Its own process group: the tsx CLI runs the worker in a child process, and SIGKILL cannot
    // be relayed, so signals go to the whole group (see `signal`).
    detached: true,
  });
  workers.push(child);
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`worker did not start in 30 s:\n${log}`)), 30_000);
    const onData = (chunk: Buffer) => {
      log += chunk.toString();
      if (log.includes("[worker] ready")) {
        clearTimeout(timer);
        resolve(child);
      }
    };
    child.stdout!.on("data", onData);
    child.stderr!.on("data", (c: Buffer) => (log += c.toString()));
    child.on("exit", (code, signal) => {
      clearTimeout(timer);
      if (!log.includes("[worker] ready")) reject(new Error(`worker exited (${code ?? signal}):\n${log}`));
    });
  });
}

/** Signal the worker's process group: the tsx CLI and the Node process running the worker. */
function signal(child: ChildProcess, sig: NodeJS.Signals): void {
  try {
    process.kill(-child.pid!, sig);
  } catch {
    // already gone
  }
}

function exited(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve();
  return new Promise((resolve) => child.once("exit", () => resolve()));
}

async function row(id: string) {
  const [r] = await m.db
    .getDb()
    .select()
    .from(m.schema.measurements)
    .where(sql`${m.schema.measurements.id} = ${id}`);
  return r!;
}

async function waitFor<T>(what: string, timeoutMs: number, probe: () => Promise<T | null>): Promise<T> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const v = await probe();
    if (v !== null) return v;
    if (Date.now() > until) throw new Error(`timed out waiting for ${what}\n${log.slice(-2000)}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

let stackId = "";
let finishedId = "";
let staff: import("@/server/auth/permissions").Actor;
let objectiveId = "";

beforeAll(async () => {
  if (!baseUrl) throw new Error("DATABASE_URL is not set: integration tests need a PostgreSQL server.");
  const admin = new Client({ connectionString: baseUrl });
  await admin.connect();
  await admin.query(`CREATE DATABASE "${dbName}"`);
  await admin.end();
  m = await modules();
  await m.migrator.migrate(m.db.getDb(), { migrationsFolder: path.join(repoRoot, "drizzle") });
  const f = await m.helpers.makeFacility("crash");
  staff = f.actors.staff;
  objectiveId = f.objectiveIds[0];
  // Invented data: 200 × 256 × 256 uint16 (26 MB), beads down to 10 µm, so the analysis takes seconds.
  const demo = makeDemoBeadStack({
    na: 1.4,
    immersionRi: 1.518,
    sampleRi: 1.518,
    emissionWavelengthNm: 520,
    beadCount: 48,
    shape: [200, 256, 256],
    depthRangeUm: [0, 10],
    seed: 11,
  });
  const file = path.join(dataDir, "beads.tif");
  writeFileSync(file, demo.tiff);
  stackId = (
    await m.stacks.registerStackFromFile(m.db.getDb(), m.storage.getStorage(), staff, {
      filePath: file,
      fileName: "beads.tif",
    })
  ).id;
}, 90_000);

afterAll(async () => {
  for (const w of workers) {
    if (w.exitCode === null && w.signalCode === null) {
      signal(w, "SIGTERM");
      const killer = setTimeout(() => signal(w, "SIGKILL"), 10_000);
      await exited(w);
      clearTimeout(killer);
    }
    signal(w, "SIGKILL"); // anything left in the group
  }
  if (m) {
    await m.boss.stopBoss().catch(() => {});
    await m.db.closeDb().catch(() => {});
  }
  if (baseUrl) {
    const admin = new Client({ connectionString: baseUrl });
    await admin.connect();
    await admin.query(`DROP DATABASE IF EXISTS "${dbName}" WITH (FORCE)`);
    await admin.end();
  }
  rmSync(dataDir, { recursive: true, force: true });
}, 60_000);

describe("a worker killed mid-job", () => {
  it("is retried after the job expires and a new worker finishes the measurement once", async () => {
    const t0 = Date.now();
    const first = await startWorker();
    const { id } = await m.measurements.createMeasurement(m.db.getDb(), staff, {
      stackId,
      objectiveId,
      purpose: "routine",
      channel: 0,
      emissionWavelengthNm: 520,
      beadDiameterNm: 100,
      modality: "widefield",
    });

    const stage = await waitFor("detecting or fitting", 45_000, async () => {
      const r = await row(id);
      if (r.status !== "queued" && r.status !== "running")
        throw new Error(`the measurement was ${r.status} before the worker could be killed mid-analysis`);
      return r.stage === "detecting" || r.stage === "fitting" ? r.stage : null;
    });
    signal(first, "SIGKILL");
    await exited(first);
    const killedAt = Date.now();
    const left = await row(id);
    // The dead worker leaves the row running, mid-analysis, with no results.
    expect(left.status).toBe("running");
    expect(["detecting", "fitting", "saving"]).toContain(left.stage);

    await startWorker();
    const done = await waitFor("the retried job to finish", 60_000, async () => {
      const r = await row(id);
      if (r.status === "failed" || r.status === "cancelled")
        throw new Error(`measurement ${r.status}: ${r.errorMessage}\n${log.slice(-2000)}`);
      return r.status === "done" ? r : null;
    });
    const recoveredS = (Date.now() - killedAt) / 1000;
    finishedId = id;

    const beads = await m.db
      .getDb()
      .select({ index: m.schema.beadResults.beadIndex })
      .from(m.schema.beadResults)
      .where(sql`${m.schema.beadResults.measurementId} = ${id}`);
    const summary = done.summary as { beads: { found: number; used: number } };
    expect(beads.length).toBeGreaterThan(10);
    expect(new Set(beads.map((b) => b.index)).size).toBe(beads.length);
    expect(beads.length).toBe(summary.beads.found);

    // pg-boss's own record: the job expired once and its retry completed. The queue marks
    // the job complete just after the handler returns, so allow it a moment.
    const jobState = () =>
      m.db
        .getDb()
        .execute(
          sql`SELECT state, retry_count FROM pgboss.job WHERE name = 'analyze-measurement' AND data->>'measurementId' = ${id}`,
        );
    let jobs = await jobState();
    for (let i = 0; i < 50 && jobs.rows[0]?.state === "active"; i++) {
      await new Promise((r) => setTimeout(r, 200));
      jobs = await jobState();
    }
    expect(jobs.rows).toEqual([{ state: "completed", retry_count: 1 }]);

    // Expiry (15 s after the start) + maintenance (≤ 3 s) + retry delay (5–10 s) + the analysis.
    expect(recoveredS).toBeLessThan(60);
    console.log(
      `[worker-crash] killed while ${stage}; done ${recoveredS.toFixed(1)} s after the kill, ${((Date.now() - t0) / 1000).toFixed(1)} s in all; ${beads.length} bead rows`,
    );
  }, 120_000);

  it("exports the finished measurement: NBO-named summary and the averaged PSF as OME-TIFF", async () => {
    expect(finishedId).not.toBe("");
    const db = m.db.getDb();
    const summary = await m.exports.getMeasurementSummaryExport(db, staff, finishedId);
    const stored = (await row(finishedId)).summary as {
      theory: { lateralNm: number; axialNm: number };
      headline: { lateralFwhmUm: number; axialFwhmUm: number };
      beads: { used: number };
      averagedPsf: { shape: [number, number, number]; voxelSizeUm: { x: number; y: number; z: number } };
    };
    expect(summary.schema).toBe("beadbench.summary/1");
    const oc = summary.OpticalCalibration;
    // Same numbers as the stored summary, in µm (not recomputed).
    expect(oc.TheoreticalXYSpotSize_FWHM).toBeCloseTo(stored.theory.lateralNm / 1000, 12);
    expect(oc.TheoreticalZSpotSize_FWHM).toBeCloseTo(stored.theory.axialNm / 1000, 12);
    expect(oc.MedianXYSpotSize_FWHM).toBe(stored.headline.lateralFwhmUm);
    expect(oc.MedianZSpotSize_FWHM).toBe(stored.headline.axialFwhmUm);
    expect(oc.SampleSize).toBe(stored.beads.used);
    expect(oc.MinXYSpotSize_FWHM!).toBeLessThanOrEqual(oc.MaxXYSpotSize_FWHM!);
    expect(oc.MinZSpotSize_FWHM!).toBeLessThanOrEqual(oc.MaxZSpotSize_FWHM!);
    expect(oc.PSFEquation).toMatch(/@/);
    expect(summary.purpose).toBe("routine");
    expect(summary.engineVersion).toMatch(/^psf-engine\//);
    expect(["pass", "fail", "check", "insufficient"]).toContain(summary.verdict.level);

    const { bytes, fileName } = await m.exports.getAveragedPsfOmeTiff(db, staff, finishedId);
    expect(fileName).toMatch(/\.ome\.tif$/);
    const { readTiffStack } = await import("@/lib/tiff");
    const { stack, metadata } = await readTiffStack(bytes);
    expect(metadata.format).toBe("ome-tiff");
    expect(stack.dtype).toBe("float32");
    expect(stack.shape).toEqual(stored.averagedPsf.shape);
    expect(stack.voxelSizeUm).toEqual(stored.averagedPsf.voxelSizeUm);
    expect(metadata.voxelSizeUm.z?.source).toBe("ome-xml");
  });
});
