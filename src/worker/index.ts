/**
 * The one worker entry: validated env, the shared pg pool, the pg-boss consumer
 * for analyses, periodic clean-up of abandoned uploads, and a graceful shutdown.
 * Start it beside the web app (`npm start`) or alone (`npm run worker`) on any
 * machine that reaches the same PostgreSQL and object store.
 */
import { getEnv } from "../env";
import { closeDb } from "../server/db/client";
import {
  ANALYZE_QUEUE,
  REMINDERS_QUEUE,
  WEEKLY_DIGEST_QUEUE,
  getBoss,
  scheduleReminders,
  scheduleWeeklyDigest,
  stopBoss,
} from "../server/queue/boss";
import { closeMailer } from "../server/mail/mailer";
import { analyzeMeasurement } from "./handlers/analyze-measurement";
import { cleanUpAbandonedUploads } from "./handlers/clean-up-uploads";
import { sendReminders } from "./handlers/send-reminders";
import { sendWeeklyDigest } from "./handlers/weekly-digest";

async function main() {
  getEnv(); // fail at boot on a bad environment
  const boss = await getBoss();
  await boss.work(
    ANALYZE_QUEUE,
    { pollingIntervalSeconds: 0.5, batchSize: 1, includeMetadata: true },
    async (jobs) => {
      for (const job of jobs) {
        await analyzeMeasurement(job.data, { retryCount: job.retryCount, retryLimit: job.retryLimit });
      }
    },
  );
  // Daily reminder digests; a failure to schedule them must not stop the analyses.
  try {
    await scheduleReminders(boss);
    await boss.work(REMINDERS_QUEUE, { pollingIntervalSeconds: 30, batchSize: 1 }, async (jobs) => {
      for (const job of jobs) await sendReminders(job.data);
    });
  } catch (err) {
    console.error("[worker] reminders not scheduled:", err instanceof Error ? err.message : err);
  }
  // The weekly summary for admins (Mondays); same rule: never stops the analyses.
  try {
    await scheduleWeeklyDigest(boss);
    await boss.work(WEEKLY_DIGEST_QUEUE, { pollingIntervalSeconds: 30, batchSize: 1 }, async (jobs) => {
      for (const job of jobs) await sendWeeklyDigest(job.data);
    });
  } catch (err) {
    console.error("[worker] weekly digest not scheduled:", err instanceof Error ? err.message : err);
  }
  const cleanup = setInterval(() => void cleanUpAbandonedUploads().catch(() => {}), 3600_000);
  void cleanUpAbandonedUploads().catch(() => {});
  console.log("[worker] ready: waiting for measurements");

  let stopping = false;
  const stop = async () => {
    if (stopping) return;
    stopping = true;
    clearInterval(cleanup);
    console.log("[worker] stopping…");
    await stopBoss().catch(() => {});
    closeMailer();
    await closeDb().catch(() => {});
    process.exit(0);
  };
  process.on("SIGINT", stop);
  process.on("SIGTERM", stop);
}

process.on("unhandledRejection", (err) => {
  // Never let one bad job take the worker down.
  console.error("[worker] unhandled rejection:", err instanceof Error ? err.message : err);
});

main().catch((err) => {
  console.error("[worker] could not start:", err instanceof Error ? err.message : err);
  process.exit(1);
});
