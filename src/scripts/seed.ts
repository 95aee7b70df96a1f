/**
 * Seed the demo data. Passwords come from DEMO_PASSWORDS_FILE (JSON { admin, staff,
 * researcher, engineer }); the start script creates that git-ignored file once.
 */
import { readFileSync } from "node:fs";
import { closeDb, getDb } from "../server/db/client";
import { seedDemoData } from "../server/services/demo-data";

const file = process.env.DEMO_PASSWORDS_FILE ?? ".data/demo-credentials.json";
const passwords = JSON.parse(readFileSync(file, "utf8"));

seedDemoData(getDb(), passwords)
  .then(() => console.log("[seed] demo data is in place"))
  .catch((err) => {
    console.error("[seed] failed:", err instanceof Error ? err.message : err);
    process.exitCode = 1;
  })
  .finally(() => closeDb());
