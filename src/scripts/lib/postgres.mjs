// PostgreSQL on loopback, owned by the project: find (or install) Debian's server
// binaries, keep one cluster under the git-ignored data folder, start it on
// 127.0.0.1 at a fixed non-default port, and stop it again. Plain Node so it runs
// before `npm ci` has finished; works as root (via `runuser -u postgres`) and as
// an ordinary user.
import { execFileSync, spawnSync } from "node:child_process";
import { createHash } from "node:crypto";
import { existsSync, mkdirSync, readdirSync, symlinkSync, lstatSync, chownSync, chmodSync } from "node:fs";
import { userInfo } from "node:os";
import path from "node:path";

export const PG_PORT = Number(process.env.BEADBENCH_PG_PORT ?? 54329);
const isRoot = process.getuid?.() === 0;

function log(msg) {
  process.stdout.write(`[postgres] ${msg}\n`);
}

/** The newest /usr/lib/postgresql/<v>/bin that has initdb, or null. */
export function findPgBin() {
  const base = "/usr/lib/postgresql";
  if (!existsSync(base)) return null;
  const versions = readdirSync(base)
    .filter((v) => existsSync(path.join(base, v, "bin", "initdb")))
    .sort((a, b) => Number(b) - Number(a));
  return versions.length ? path.join(base, versions[0], "bin") : null;
}

export function ensurePgInstalled() {
  let bin = findPgBin();
  if (bin) return bin;
  if (!isRoot) {
    throw new Error(
      "PostgreSQL server binaries not found. Install Debian's package first: sudo apt-get install -y postgresql",
    );
  }
  log("server binaries not found: installing Debian's postgresql package (one-off)");
  execFileSync("apt-get", ["update", "-qq"], { stdio: "inherit" });
  execFileSync("apt-get", ["install", "-y", "-qq", "postgresql"], {
    stdio: "inherit",
    env: { ...process.env, DEBIAN_FRONTEND: "noninteractive" },
  });
  bin = findPgBin();
  if (!bin) throw new Error("postgresql was installed but initdb is still missing");
  return bin;
}

/** Run a server binary as the cluster owner (user postgres when we are root). */
function runAsOwner(bin, args, opts = {}) {
  const cmd = isRoot ? "runuser" : bin;
  const full = isRoot ? ["-u", "postgres", "--", bin, ...args] : args;
  // cd / first: runuser complains when the cwd is not readable by postgres.
  return spawnSync(cmd, full, { cwd: "/", encoding: "utf8", ...opts });
}

function canPostgresReach(dir) {
  if (!isRoot) return true;
  return spawnSync("runuser", ["-u", "postgres", "--", "test", "-x", dir], { cwd: "/" }).status === 0;
}

/**
 * The cluster folder: <dataDir>/pg. When we are root and a parent folder is not
 * traversable by user postgres (e.g. a clone under /root), the cluster lives in
 * /var/tmp/beadbench-<hash> and <dataDir>/pg is a symlink to it.
 */
export function clusterDir(dataDir) {
  const wanted = path.resolve(dataDir, "pg");
  mkdirSync(path.dirname(wanted), { recursive: true });
  if (existsSync(wanted) || isSymlink(wanted)) return wanted;
  if (canPostgresReach(path.dirname(wanted))) {
    mkdirSync(wanted, { recursive: true });
    return wanted;
  }
  const hash = createHash("sha256").update(wanted).digest("hex").slice(0, 12);
  const outside = `/var/tmp/beadbench-${hash}/pg`;
  mkdirSync(outside, { recursive: true });
  chownSync(path.dirname(outside), uid("postgres"), gid("postgres"));
  symlinkSync(outside, wanted);
  log(`project folder is not reachable by user postgres; cluster kept in ${outside}`);
  return wanted;
}

function isSymlink(p) {
  try {
    return lstatSync(p).isSymbolicLink();
  } catch {
    return false;
  }
}
function uid(name) {
  return Number(execFileSync("id", ["-u", name], { encoding: "utf8" }).trim());
}
function gid(name) {
  return Number(execFileSync("id", ["-g", name], { encoding: "utf8" }).trim());
}

export function isRunning(bin, dir) {
  return runAsOwner(path.join(bin, "pg_ctl"), ["-D", dir, "status"]).status === 0;
}

/**
 * Make sure the project's cluster exists and is running.
 * @returns {{ bin: string, dir: string, port: number, startedHere: boolean, adminUrl: (db: string) => string }}
 */
export function ensurePostgres(dataDir) {
  const bin = ensurePgInstalled();
  const dir = clusterDir(dataDir);
  const real = isSymlink(dir) ? path.resolve(path.dirname(dir), readLink(dir)) : dir;
  if (isRoot) {
    chownSync(real, uid("postgres"), gid("postgres"));
  }
  chmodSync(real, 0o700);
  if (!existsSync(path.join(real, "PG_VERSION"))) {
    log(`creating cluster in ${dir}`);
    const r = runAsOwner(path.join(bin, "initdb"), [
      "-D",
      real,
      "-U",
      "postgres",
      "--auth=trust",
      "--encoding=UTF8",
      "--locale=C.UTF-8",
    ]);
    if (r.status !== 0) throw new Error(`initdb failed: ${r.stderr || r.stdout}`);
  }
  let startedHere = false;
  if (!isRunning(bin, real)) {
    log(`starting on 127.0.0.1:${PG_PORT}`);
    const r = runAsOwner(path.join(bin, "pg_ctl"), [
      "-D",
      real,
      "-l",
      path.join(real, "server.log"),
      "-o",
      // Loopback only, and no Unix socket: nothing outside this machine can connect,
      // and we never touch the default socket directory or port 5432.
      `-c listen_addresses=127.0.0.1 -p ${PG_PORT} -c unix_socket_directories=''`,
      "-w",
      "-t",
      "60",
      "start",
    ]);
    if (r.status !== 0) {
      throw new Error(`pg_ctl start failed (see ${path.join(real, "server.log")}): ${r.stderr || r.stdout}`);
    }
    startedHere = true;
  }
  return {
    bin,
    dir: real,
    port: PG_PORT,
    startedHere,
    url: (db) => `postgres://postgres@127.0.0.1:${PG_PORT}/${db}`,
  };
}

function readLink(p) {
  return execFileSync("readlink", [p], { encoding: "utf8" }).trim();
}

export function stopPostgres(pg) {
  log("stopping");
  runAsOwner(path.join(pg.bin, "pg_ctl"), ["-D", pg.dir, "-m", "fast", "-w", "stop"]);
}

/** Run SQL against the maintenance database with psql. */
export function psql(pg, sql, db = "postgres") {
  const r = spawnSync(
    path.join(pg.bin, "psql"),
    [
      "-h",
      "127.0.0.1",
      "-p",
      String(pg.port),
      "-U",
      "postgres",
      "-d",
      db,
      "-v",
      "ON_ERROR_STOP=1",
      "-tAc",
      sql,
    ],
    { encoding: "utf8" },
  );
  if (r.status !== 0) throw new Error(`psql failed: ${r.stderr}`);
  return r.stdout.trim();
}

export function ensureDatabase(pg, name) {
  if (!/^[a-z_][a-z0-9_]*$/.test(name)) throw new Error(`bad database name ${name}`);
  const exists = psql(pg, `select 1 from pg_database where datname = '${name}'`);
  if (exists !== "1") {
    psql(pg, `create database ${name}`);
    log(`created database ${name}`);
  }
}

export function dropDatabase(pg, name) {
  if (!/^[a-z_][a-z0-9_]*$/.test(name)) throw new Error(`bad database name ${name}`);
  psql(pg, `drop database if exists ${name} with (force)`);
}

export const currentUser = () => userInfo().username;
