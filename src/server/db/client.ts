/**
 * One pg Pool per process (web app, worker, scripts), created from the validated
 * environment on first use and cached on globalThis so dev reloads don't leak pools.
 */
import { drizzle, type NodePgDatabase } from "drizzle-orm/node-postgres";
import { Pool } from "pg";
import { getEnv } from "../../env";
import * as schema from "./schema";

export type Db = NodePgDatabase<typeof schema>;
/** A transaction handle has the same query API as the database. */
export type Tx = Parameters<Parameters<Db["transaction"]>[0]>[0];

const globalForDb = globalThis as unknown as { beadbenchPool?: Pool; beadbenchDb?: Db };

export function getPool(): Pool {
  if (!globalForDb.beadbenchPool) {
    const pool = new Pool({
      connectionString: getEnv().DATABASE_URL,
      max: 10,
      connectionTimeoutMillis: 5000,
    });
    // A dropped connection (e.g. the server restarting) must not crash the process;
    // the next query gets a fresh client.
    pool.on("error", () => {});
    globalForDb.beadbenchPool = pool;
  }
  return globalForDb.beadbenchPool;
}

export function getDb(): Db {
  if (!globalForDb.beadbenchDb) {
    globalForDb.beadbenchDb = drizzle(getPool(), { schema });
  }
  return globalForDb.beadbenchDb;
}

export async function closeDb(): Promise<void> {
  const pool = globalForDb.beadbenchPool;
  globalForDb.beadbenchPool = undefined;
  globalForDb.beadbenchDb = undefined;
  if (pool) await pool.end();
}
