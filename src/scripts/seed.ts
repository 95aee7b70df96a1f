/**
 * Seed the demo data. Passwords come from DEMO_PASSWORDS_FILE (JSON { admin, staff,
 * researcher, engineer }); the start script creates that git-ignored file once.
 * DEMO_HISTORY=0 skips the invented months of checks (the tests do).
 */
import { readFileSync } from "node:fs";
import { closeDb, getDb } from "../server/db/client";
import { stopBoss } from "../server/queue/boss";
import { seedDemoData } from "../server/services/demo-data";
import { getStorage } from "../server/storage/get-storage";
import { seedDemoHistory } from "./seed-history";

const file = process.env.DEMO_PASSWORDS_FILE ?? ".data/demo-credentials.json";
const passwords = JSON.parse(readFileSync(file, "utf8"));

async function main() {
  await seedDemoData(getDb(), passwords);
  console.log("[seed] demo data is in place");
  if (process.env.DEMO_HISTORY !== "0") {
    const t0 = Date.now();
    const n = await seedDemoHistory(getDb(), getStorage());
    if (n > 0)
      console.log(
        `[seed] queued ${n} invented monthly checks for the worker (${((Date.now() - t0) / 1000).toFixed(0)} s)`,
      );
  }
}

main()
  .catch((err) => {
    console.error("[seed] failed:", err instanceof Error ? err.message : err);
    process.exitCode = 1;
  })
  .finally(async () => {
    await stopBoss().catch(() => {});
    await closeDb();
  });
