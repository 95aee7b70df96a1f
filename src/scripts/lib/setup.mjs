// Shared steps of `npm start` and `npm test`: dependency install, secrets, and
// running project commands with the right environment. Plain Node (no deps).
import { spawn, spawnSync } from "node:child_process";
import { randomBytes } from "node:crypto";
import { existsSync, mkdirSync, readFileSync, statSync, writeFileSync } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";

export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../../..");
process.chdir(ROOT);

export function log(tag, msg) {
  process.stdout.write(`[${tag}] ${msg}\n`);
}

/** `npm ci` when node_modules is missing or older than the lock file. */
export function ensureDependencies() {
  const marker = path.join(ROOT, "node_modules", ".package-lock.json");
  const lock = path.join(ROOT, "package-lock.json");
  if (existsSync(marker) && statSync(marker).mtimeMs >= statSync(lock).mtimeMs) return;
  log("setup", "installing dependencies with npm ci (first run only)");
  const t0 = Date.now();
  const r = spawnSync("npm", ["ci", "--no-audit", "--no-fund"], { stdio: "inherit", cwd: ROOT });
  if (r.status !== 0) throw new Error("npm ci failed");
  log("setup", `npm ci took ${((Date.now() - t0) / 1000).toFixed(1)} s`);
}

/** A file of secrets kept under the git-ignored data folder, created once. */
export function ensureSecrets(dataDir) {
  mkdirSync(dataDir, { recursive: true });
  const file = path.join(dataDir, "secrets.json");
  if (existsSync(file)) return JSON.parse(readFileSync(file, "utf8"));
  const secrets = { AUTH_SECRET: randomBytes(48).toString("base64url") };
  writeFileSync(file, JSON.stringify(secrets, null, 2), { mode: 0o600 });
  return secrets;
}

/** Demo passwords: random, 16+ characters, created once and printed at start. */
export function ensureDemoPasswords(file) {
  if (existsSync(file)) return JSON.parse(readFileSync(file, "utf8"));
  const pw = () => `bead-${randomBytes(9).toString("base64url")}`;
  const passwords = { admin: pw(), staff: pw(), researcher: pw(), engineer: pw() };
  mkdirSync(path.dirname(file), { recursive: true });
  writeFileSync(file, JSON.stringify(passwords, null, 2), { mode: 0o600 });
  return passwords;
}

/** Run a project command to completion; throws on a non-zero exit. */
export function run(tag, cmd, args, env) {
  log(tag, [cmd, ...args].join(" "));
  const r = spawnSync(cmd, args, { stdio: "inherit", cwd: ROOT, env });
  if (r.status !== 0) throw new Error(`${tag} failed (exit ${r.status ?? r.signal})`);
}

export const bin = {
  node: process.execPath,
  tsx: path.join(ROOT, "node_modules/tsx/dist/cli.mjs"),
  next: path.join(ROOT, "node_modules/next/dist/bin/next"),
};

export function runTs(tag, script, env) {
  run(tag, bin.node, [bin.tsx, script], env);
}

/** Build the app unless .next is newer than every source file. */
export function buildIfStale(env) {
  const buildId = path.join(ROOT, ".next", "BUILD_ID");
  if (existsSync(buildId) && newestSourceMtime() <= statSync(buildId).mtimeMs) {
    log("build", "the production build is up to date");
    return;
  }
  const t0 = Date.now();
  run("build", bin.node, [bin.next, "build"], env);
  log("build", `next build took ${((Date.now() - t0) / 1000).toFixed(1)} s`);
}

function newestSourceMtime() {
  const out = spawnSync(
    "git",
    [
      "ls-files",
      "-co",
      "--exclude-standard",
      "src",
      "public",
      "package-lock.json",
      "next.config.mjs",
      "tailwind.config.ts",
      "postcss.config.mjs",
    ],
    {
      cwd: ROOT,
      encoding: "utf8",
    },
  );
  let newest = 0;
  for (const f of out.stdout.split("\n").filter(Boolean)) {
    try {
      newest = Math.max(newest, statSync(path.join(ROOT, f)).mtimeMs);
    } catch {
      /* deleted file */
    }
  }
  return newest || Date.now();
}

/** Start a long-running child; returns it. Output is prefixed with the tag. */
/** Start a long-running child whose output is prefixed with `[tag]`; `transcript`, if given, keeps every line. */
export function startChild(tag, cmd, args, env, transcript) {
  const child = spawn(cmd, args, { cwd: ROOT, env, stdio: ["ignore", "pipe", "pipe"] });
  const prefix = (stream, out) =>
    stream.on("data", (buf) => {
      for (const line of buf.toString().split("\n")) {
        if (!line.trim()) continue;
        out.write(`[${tag}] ${line}\n`);
        transcript?.push(line);
      }
    });
  prefix(child.stdout, process.stdout);
  prefix(child.stderr, process.stderr);
  return child;
}

export async function waitForHttp(url, timeoutMs = 60_000) {
  const t0 = Date.now();
  while (Date.now() - t0 < timeoutMs) {
    try {
      const res = await fetch(url, { redirect: "manual" });
      if (res.status < 500) return;
    } catch {
      /* not up yet */
    }
    await new Promise((r) => setTimeout(r, 300));
  }
  throw new Error(`${url} did not answer within ${timeoutMs / 1000} s`);
}
