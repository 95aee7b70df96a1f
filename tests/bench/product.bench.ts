/**
 * Product benchmark: one full measurement of a ~105 MB stack (200 × 512 × 512 uint16, invented
 * Gibson–Lanni beads from fixtures/demo-stacks) through the services — register the file, create
 * the measurement, then run the worker's job handler (`analyzeMeasurement`: read, detect, fit,
 * model, save) in this process — with the time spent in each stage as the row reports it.
 *
 * Needs a PostgreSQL server: DATABASE_URL names one database on it; the benchmark creates a
 * database of its own beside it (`bb_bench_<pid>`), migrates it, and drops it at the end, with
 * objects in a temporary DATA_DIR, so nothing is left in yours. Without DATABASE_URL it prints
 * a message and returns no rows.
 *
 * Run alone: `DATABASE_URL=postgres://postgres@127.0.0.1:54329/postgres npx tsx tests/bench/product.bench.ts`.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { Client } from "pg";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";

interface Row {
  name: string;
  value: number;
  unit: string;
  target?: string;
}

const SHAPE: [number, number, number] = [200, 512, 512];
const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../..");

export async function run(): Promise<Row[]> {
  const baseUrl = process.env.DATABASE_URL;
  if (!baseUrl) {
    console.log(
      "product.bench: DATABASE_URL is not set; skipped. Give it any database on a PostgreSQL server " +
        "where you may create databases (e.g. postgres://postgres@127.0.0.1:54329/postgres).",
    );
    return [];
  }
  const dbName = `bb_bench_${process.pid}`;
  const url = new URL(baseUrl);
  url.pathname = `/${dbName}`;
  const dataDir = mkdtempSync(path.join(tmpdir(), "bb-bench-"));
  const saved = {
    DATABASE_URL: process.env.DATABASE_URL,
    DATA_DIR: process.env.DATA_DIR,
    AUTH_SECRET: process.env.AUTH_SECRET,
  };
  // Before anything reads the environment (getEnv caches it at first use).
  process.env.DATABASE_URL = url.toString();
  process.env.DATA_DIR = dataDir;
  process.env.AUTH_SECRET ??= "bench-only-secret-0123456789abcdef0123456789";

  const admin = new Client({ connectionString: baseUrl });
  await admin.connect();
  await admin.query(`CREATE DATABASE "${dbName}"`);
  await admin.end();

  const { getDb, closeDb } = await import("../../src/server/db/client");
  const { stopBoss, getBoss, ANALYZE_QUEUE } = await import("../../src/server/queue/boss");
  try {
    const { migrate } = await import("drizzle-orm/node-postgres/migrator");
    const { sql, eq } = await import("drizzle-orm");
    const { measurements } = await import("../../src/server/db/schema");
    const { getStorage } = await import("../../src/server/storage/get-storage");
    const { registerStackFromFile } = await import("../../src/server/services/stacks");
    const { createMeasurement } = await import("../../src/server/services/measurements");
    const { analyzeMeasurement } = await import("../../src/worker/handlers/analyze-measurement");
    const { makeFacility } = await import("../integration/helpers");
    await migrate(getDb(), { migrationsFolder: path.join(repoRoot, "drizzle") });
    const f = await makeFacility("bench");

    const tGen = performance.now();
    const demo = makeDemoBeadStack({
      na: 1.4,
      immersionRi: 1.518,
      sampleRi: 1.518,
      emissionWavelengthNm: 520,
      beadCount: 60,
      shape: SHAPE,
      depthRangeUm: [0, 10],
      seed: 3,
    });
    const genS = (performance.now() - tGen) / 1000;
    const file = path.join(dataDir, "beads.tif");
    writeFileSync(file, demo.tiff);
    const mb = demo.tiff.byteLength / 1e6;

    const t0 = performance.now();
    const stack = await registerStackFromFile(getDb(), getStorage(), f.actors.staff, {
      filePath: file,
      fileName: "beads.tif",
    });
    const t1 = performance.now();
    const { id } = await createMeasurement(getDb(), f.actors.staff, {
      stackId: stack.id,
      objectiveId: f.objectiveIds[0],
      purpose: "routine",
      channel: 0,
      emissionWavelengthNm: 520,
      beadDiameterNm: 100,
      modality: "widefield",
    });
    const t2 = performance.now();
    // No worker runs on this database, but cancel the queued job anyway: we run the handler here.
    const jobs = await getDb().execute(
      sql`SELECT id FROM pgboss.job WHERE name = ${ANALYZE_QUEUE} AND data->>'measurementId' = ${id}`,
    );
    const boss = await getBoss();
    for (const j of jobs.rows as Array<{ id: string }>) await boss.cancel(ANALYZE_QUEUE, j.id);

    // Watch the row's stage while the handler runs (the analysis itself is in a worker thread).
    const firstSeen = new Map<string, number>();
    let watching = true;
    const watch = (async () => {
      while (watching) {
        const [r] = await getDb()
          .select({ stage: measurements.stage })
          .from(measurements)
          .where(eq(measurements.id, id));
        if (r && !firstSeen.has(r.stage)) firstSeen.set(r.stage, performance.now());
        await new Promise((res) => setTimeout(res, 25));
      }
    })();
    const t3 = performance.now();
    await analyzeMeasurement({ measurementId: id }, { retryCount: 0, retryLimit: 0 });
    const t4 = performance.now();
    watching = false;
    await watch;
    const [done] = await getDb().select().from(measurements).where(eq(measurements.id, id));
    firstSeen.set("done", t4);

    const rows: Row[] = [
      {
        name: `invented stack ${SHAPE.join("x")} uint16 (${demo.beads.length} beads): size`,
        value: mb,
        unit: "MB",
      },
      { name: "generate the stack (not product time)", value: genS, unit: "s" },
      { name: "register (inspect, hash, store, insert)", value: (t1 - t0) / 1000, unit: "s" },
      { name: "create measurement (checks, insert, enqueue)", value: (t2 - t1) / 1000, unit: "s" },
    ];
    // Stages in the order the row showed them; each lasts until the next one was seen.
    const seen = [...firstSeen.entries()].sort((a, b) => a[1] - b[1]);
    for (let i = 0; i + 1 < seen.length; i++) {
      rows.push({ name: `stage ${seen[i][0]}`, value: (seen[i + 1][1] - seen[i][1]) / 1000, unit: "s" });
    }
    rows.push(
      { name: "analyzeMeasurement (claim → saved)", value: (t4 - t3) / 1000, unit: "s" },
      { name: "register → done, total", value: (t4 - t0) / 1000, unit: "s" },
      { name: "throughput register → done", value: mb / ((t4 - t0) / 1000), unit: "MB/s" },
      {
        name: `result: status ${done?.status}, beads used`,
        value: (done?.summary as { beads?: { used?: number } } | null)?.beads?.used ?? 0,
        unit: "beads",
      },
    );
    return rows;
  } finally {
    await stopBoss().catch(() => {});
    await closeDb().catch(() => {});
    const cleanup = new Client({ connectionString: baseUrl });
    await cleanup.connect();
    await cleanup.query(`DROP DATABASE IF EXISTS "${dbName}" WITH (FORCE)`);
    await cleanup.end();
    rmSync(dataDir, { recursive: true, force: true });
    for (const [k, v] of Object.entries(saved)) {
      if (v === undefined) delete process.env[k];
      else process.env[k] = v;
    }
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const rows = await run();
  for (const r of rows) console.log(`${r.name.padEnd(64)} ${r.value.toFixed(3).padStart(10)} ${r.unit}`);
}
