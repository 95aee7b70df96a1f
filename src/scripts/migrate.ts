/** Apply the committed drizzle/ migrations to DATABASE_URL. */
import { migrate } from "drizzle-orm/node-postgres/migrator";
import { closeDb, getDb } from "../server/db/client";

export async function runMigrations(): Promise<void> {
  await migrate(getDb(), { migrationsFolder: "drizzle" });
}

if (import.meta.url === `file://${process.argv[1]}`) {
  runMigrations()
    .then(() => console.log("[migrate] database is up to date"))
    .catch((err) => {
      console.error("[migrate] failed:", err instanceof Error ? err.message : err);
      process.exitCode = 1;
    })
    .finally(() => closeDb());
}
