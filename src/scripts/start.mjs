// `npm start`: all set-up on a fresh machine, then the web app and the worker.
// Ctrl-C stops both and the project's PostgreSQL (if this command started it).
import { existsSync } from "node:fs";
import net from "node:net";
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

// Development mail capture: unless the user set SMTP_URL, mail goes over SMTP to a
// local capture server (src/scripts/mail-capture.ts) that writes it to
// .data/mail-capture.jsonl, shown in Settings → Mail. Nothing is delivered.
const CAPTURE_PORT = Number(process.env.MAIL_CAPTURE_PORT || 2525);
const portIsFree = (port) =>
  new Promise((resolve) => {
    const probe = net.createServer();
    probe.once("error", () => resolve(false));
    probe.listen(port, "127.0.0.1", () => probe.close(() => resolve(true)));
  });
let captureMail = false;
if (process.env.SMTP_URL) {
  log("mail", "sending through the SMTP_URL you set");
} else if (!existsSync(path.join(ROOT, "node_modules/smtp-server"))) {
  log("mail", "smtp-server is not installed: mail is written to .data/outbox.jsonl instead");
} else if (!(await portIsFree(CAPTURE_PORT))) {
  log(
    "mail",
    `port ${CAPTURE_PORT} is in use: no mail capture, mail is written to .data/outbox.jsonl (set MAIL_CAPTURE_PORT to use another port)`,
  );
} else {
  captureMail = true;
}

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
  ...(captureMail
    ? { SMTP_URL: `smtp://127.0.0.1:${CAPTURE_PORT}`, MAIL_CAPTURE_PORT: String(CAPTURE_PORT) }
    : {}),
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

/** Resolves once something accepts TCP connections on 127.0.0.1:port. */
async function waitForPort(port, timeoutMs = 15_000) {
  const t0 = Date.now();
  while (Date.now() - t0 < timeoutMs) {
    const ok = await new Promise((resolve) => {
      const socket = net.connect(port, "127.0.0.1");
      socket.once("connect", () => {
        socket.destroy();
        resolve(true);
      });
      socket.once("error", () => resolve(false));
    });
    if (ok) return;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`the mail capture did not listen on port ${port} within ${timeoutMs / 1000} s`);
}

if (!stopping && captureMail) {
  children.push(startChild("mail", bin.node, [bin.tsx, "src/scripts/mail-capture.ts"], env));
  try {
    await waitForPort(CAPTURE_PORT);
  } catch (err) {
    console.error(`[start] ${err.message}`);
    shutdown(1);
  }
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
    ...(captureMail
      ? [
          `Mail is captured on smtp://127.0.0.1:${CAPTURE_PORT}, not delivered: read it in Settings → Mail (admins).`,
        ]
      : []),
    "",
  ];
  process.stdout.write(lines.join("\n"));
}
