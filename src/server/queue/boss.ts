/**
 * The job queue: pg-boss on the project's PostgreSQL, so any number of workers
 * on any number of machines share it. One queue per job kind.
 */
import PgBoss from "pg-boss";
import { getEnv } from "../../env";

export const ANALYZE_QUEUE = "analyze-measurement";
/** The daily reminder digests (one scheduled job sends every facility's digest). */
export const REMINDERS_QUEUE = "send-reminders";
/** Every day at 07:00 UTC. */
export const REMINDERS_CRON = "0 7 * * *";

const globalForBoss = globalThis as unknown as { beadbenchBoss?: Promise<PgBoss> };

export function getBoss(): Promise<PgBoss> {
  globalForBoss.beadbenchBoss ??= (async () => {
    const boss = new PgBoss({ connectionString: getEnv().DATABASE_URL, schema: "pgboss", max: 4 });
    boss.on("error", (err) => console.error("[queue]", err.message));
    await boss.start();
    if (!(await boss.getQueue(ANALYZE_QUEUE)))
      await boss.createQueue(ANALYZE_QUEUE, {
        name: ANALYZE_QUEUE,
        // Crashes are retried with backoff; bad input is not (the handler completes the job
        // after marking the measurement failed with the reason).
        retryLimit: 3,
        retryDelay: 5,
        retryBackoff: true,
        expireInSeconds: 30 * 60,
      });
    return boss;
  })();
  return globalForBoss.beadbenchBoss;
}

export async function enqueueAnalysis(measurementId: string): Promise<string | null> {
  const boss = await getBoss();
  return boss.send(ANALYZE_QUEUE, { measurementId });
}

export async function stopBoss(): Promise<void> {
  const pending = globalForBoss.beadbenchBoss;
  globalForBoss.beadbenchBoss = undefined;
  if (pending) await (await pending).stop({ graceful: true, wait: true, timeout: 20_000 });
}

/**
 * Create the reminders queue if needed and (re)register its daily schedule.
 * pg-boss keeps one schedule per queue name, so every worker calling this is
 * harmless, and its clock monitoring sends one job per tick across all workers.
 */
export async function scheduleReminders(boss: PgBoss): Promise<void> {
  if (!(await boss.getQueue(REMINDERS_QUEUE)))
    await boss.createQueue(REMINDERS_QUEUE, {
      name: REMINDERS_QUEUE,
      // At most one digest run at a time; a failed run is retried a few minutes later.
      policy: "singleton",
      retryLimit: 2,
      retryDelay: 300,
      expireInSeconds: 15 * 60,
    });
  await boss.schedule(REMINDERS_QUEUE, REMINDERS_CRON, {}, { tz: "UTC" });
}
