// `npm start`: all set-up on a fresh machine, then the web app and the worker.
// Ctrl-C stops both and the project's PostgreSQL (if this command started it).
import { existsSync } from "node:fs";
import path from "node:path";
import {
  ROOT,
  bin,
  buildIfStale,
  ensureDemoPasswords,
  ensureDependencies,
  ensureSecrets,
  log,
  runTs,
  startChild,
  waitForHttp,
} from "./lib/setup.mjs";
import { ensureDatabase, ensurePostgres, stopPostgres } from "./lib/postgres.mjs";

const PORT = Number(process.env.PORT ?? 3100);
const DATA_DIR = path.join(ROOT, ".data");

ensureDependencies();
const secrets = ensureSecrets(DATA_DIR);
const passwordsFile = path.join(DATA_DIR, "demo-credentials.json");
const passwords = ensureDemoPasswords(passwordsFile);
const pg = ensurePostgres(DATA_DIR);
ensureDatabase(pg, "beadbench");

// Browsers must use "localhost": Next rewrites 127.0.0.1 to localhost, and the
// sign-in cookies are tied to that host. The server still binds to 127.0.0.1 only.
const appUrl = `http://localhost:${PORT}`;
const env = {
  ...process.env,
  NEXT_TELEMETRY_DISABLED: "1",
  NODE_ENV: "production",
  DATABASE_URL: pg.url("beadbench"),
  AUTH_SECRET: secrets.AUTH_SECRET,
  AUTH_URL: appUrl,
  APP_URL: appUrl,
  DATA_DIR,
  DEMO_PASSWORDS_FILE: passwordsFile,
};

const children = [];
let stopping = false;
function shutdown(code = 0) {
  if (stopping) return;
  stopping = true;
  log("start", "stopping…");
  for (const c of children) c.kill("SIGTERM");
  setTimeout(() => {
    if (pg.startedHere) stopPostgres(pg);
    process.exit(code);
  }, 1500);
}
process.on("SIGINT", () => shutdown(0));
process.on("SIGTERM", () => shutdown(0));

try {
  runTs("migrate", "src/scripts/migrate.ts", env);
  runTs("seed", "src/scripts/seed.ts", env);
  buildIfStale(env);
} catch (err) {
  console.error(`[start] ${err.message}`);
  shutdown(1);
}

if (!stopping) {
  const web = startChild("web", bin.node, [bin.next, "start", "-H", "127.0.0.1", "-p", String(PORT)], env);
  children.push(web);
  if (existsSync(path.join(ROOT, "src/worker/index.ts"))) {
    children.push(startChild("worker", bin.node, [bin.tsx, "src/worker/index.ts"], env));
  }
  for (const c of children) c.on("exit", (code) => !stopping && shutdown(code ?? 1));
  await waitForHttp(`${appUrl}/sign-in`);
  const lines = [
    "",
    `Beadbench is running at ${appUrl}  (listening on 127.0.0.1 only; Ctrl-C stops it)`,
    "Demo sign-ins (invented facility: Larkspur Institute Imaging Core):",
    `  admin       admin@larkspur.example       ${passwords.admin}`,
    `  staff       staff@larkspur.example       ${passwords.staff}`,
    `  researcher  researcher@larkspur.example  ${passwords.researcher}`,
    `  engineer    engineer@larkspur.example    ${passwords.engineer}`,
    "",
  ];
  process.stdout.write(lines.join("\n"));
}
