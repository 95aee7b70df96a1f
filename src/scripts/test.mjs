// `npm test`: its own set-up, then typecheck, lint, format check, unit and
// integration tests against a fresh PostgreSQL database, and browser journeys in
// Debian's Chromium against a production build. The test database and data
// folder are dropped afterwards; exits non-zero on any failure.
import { execFileSync, spawnSync } from "node:child_process";
import { randomBytes } from "node:crypto";
import { existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import path from "node:path";
import {
  ROOT,
  bin,
  buildIfStale,
  ensureDependencies,
  log,
  run,
  runTs,
  startChild,
  waitForHttp,
} from "./lib/setup.mjs";
import { dropDatabase, ensureDatabase, ensurePostgres, stopPostgres } from "./lib/postgres.mjs";

const t0 = Date.now();
const E2E_PORT = Number(process.env.E2E_PORT ?? 3199);
const DATA_DIR = path.join(ROOT, ".data");
const isRoot = process.getuid?.() === 0;

/** Debian packages the tests drive: Chromium for journeys, tiffcp as an independent TIFF writer. */
function ensureSystemPackages() {
  const need = [];
  if (!existsSync("/usr/bin/chromium")) need.push("chromium");
  if (spawnSync("sh", ["-c", "command -v tiffcp"]).status !== 0) need.push("libtiff-tools");
  if (need.length === 0) return;
  if (!isRoot)
    throw new Error(
      `missing Debian packages: ${need.join(", ")} (sudo apt-get install -y ${need.join(" ")})`,
    );
  log("setup", `installing Debian packages: ${need.join(", ")}`);
  execFileSync("apt-get", ["update", "-qq"], { stdio: "inherit" });
  execFileSync("apt-get", ["install", "-y", "-qq", ...need], {
    stdio: "inherit",
    env: { ...process.env, DEBIAN_FRONTEND: "noninteractive" },
  });
}

ensureDependencies();
ensureSystemPackages();
const pg = ensurePostgres(DATA_DIR);
const suffix = `${process.pid}_${randomBytes(3).toString("hex")}`;
const dbName = `beadbench_test_${suffix}`;
const testDataDir = path.join(DATA_DIR, `test-${suffix}`);
mkdirSync(testDataDir, { recursive: true });
ensureDatabase(pg, dbName);

const appUrl = `http://localhost:${E2E_PORT}`;
const passwordsFile = path.join(testDataDir, "demo-credentials.json");
const env = {
  ...process.env,
  NEXT_TELEMETRY_DISABLED: "1",
  DATABASE_URL: pg.url(dbName),
  AUTH_SECRET: randomBytes(48).toString("base64url"),
  AUTH_URL: appUrl,
  APP_URL: appUrl,
  DATA_DIR: testDataDir,
  PG_BIN: pg.bin,
  PG_PORT: String(pg.port),
  DEMO_PASSWORDS_FILE: passwordsFile,
  DEMO_HISTORY: "0",
  E2E_BASE_URL: appUrl,
  E2E_PASSWORDS_FILE: passwordsFile,
  E2E_SCREENSHOT_DIR: path.join(ROOT, "test-results", "screenshots"),
};

/**
 * After the browser and API tests have signed in, failed to sign in, expired sessions and used
 * tokens: nothing the web app or the worker printed may hold a password, the auth secret, a
 * whole API token, or a decoded session (common practice; OWASP Logging Cheat Sheet).
 */
function checkNoSecretsLogged(lines, secrets) {
  const leaks = [];
  for (const line of lines) {
    if (secrets.some((s) => line.includes(s))) leaks.push("a password or the auth secret");
    if (/\bbb_[A-Za-z0-9_-]{32}\b/.test(line)) leaks.push("an API token");
    if (/"payload"\s*:/.test(line)) leaks.push("a decoded session token");
  }
  if (leaks.length) throw new Error(`the server logs hold ${[...new Set(leaks)].join(", ")}`);
  log("test", `server and worker logs: ${lines.length} lines, no secrets`);
}

const vitest = path.join(ROOT, "node_modules/vitest/vitest.mjs");
let server;
let worker;
let failed = false;
try {
  run("typecheck", bin.node, [path.join(ROOT, "node_modules/typescript/bin/tsc"), "--noEmit"], env);
  run("lint", bin.node, [path.join(ROOT, "node_modules/eslint/bin/eslint.js"), "."], env);
  run(
    "format",
    bin.node,
    [path.join(ROOT, "node_modules/prettier/bin/prettier.cjs"), "--check", "--log-level", "warn", "."],
    env,
  );
  runTs("migrate", "src/scripts/migrate.ts", env);
  run("unit+integration", bin.node, [vitest, "run", "--project", "unit", "--project", "integration"], env);

  // Browser journeys against a production build, seeded with known passwords.
  writeFileSync(
    passwordsFile,
    JSON.stringify({
      admin: "e2e-admin-pass-1",
      staff: "e2e-staff-pass-1",
      researcher: "e2e-research-pass-1",
      engineer: "e2e-engineer-pass-1",
    }),
  );
  runTs("seed", "src/scripts/seed.ts", env);
  buildIfStale({ ...env, NODE_ENV: "production" });
  // The browser/API tests run against a small upload limit so oversize bodies are cheap to send.
  const e2eEnv = { ...env, MAX_UPLOAD_BYTES: String(20 * 1024 * 1024) };
  const transcript = [];
  server = startChild(
    "web",
    bin.node,
    [bin.next, "start", "-H", "127.0.0.1", "-p", String(E2E_PORT)],
    { ...e2eEnv, NODE_ENV: "production" },
    transcript,
  );
  worker = startChild("worker", bin.node, [bin.tsx, "src/worker/index.ts"], e2eEnv, transcript);
  await waitForHttp(`${appUrl}/sign-in`);
  run("e2e", bin.node, [vitest, "run", "--project", "e2e"], e2eEnv);
  checkNoSecretsLogged(transcript, [
    env.AUTH_SECRET,
    ...Object.values(JSON.parse(readFileSync(passwordsFile, "utf8"))),
  ]);
} catch (err) {
  failed = true;
  console.error(`[test] ${err.message}`);
} finally {
  if (server) server.kill("SIGTERM");
  if (worker) worker.kill("SIGTERM");
  await new Promise((r) => setTimeout(r, 500));
  try {
    dropDatabase(pg, dbName);
  } catch (err) {
    console.error(`[test] could not drop ${dbName}: ${err.message}`);
  }
  rmSync(testDataDir, { recursive: true, force: true });
  if (pg.startedHere) stopPostgres(pg);
  log("test", `${failed ? "FAILED" : "all green"} in ${((Date.now() - t0) / 1000).toFixed(0)} s`);
  process.exit(failed ? 1 : 0);
}
