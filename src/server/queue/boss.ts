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
/** The weekly summary for admins (one scheduled job sends every facility's summary). */
export const WEEKLY_DIGEST_QUEUE = "weekly-digest";
/** Mondays at 07:00 UTC. */
export const WEEKLY_DIGEST_CRON = "0 7 * * 1";

const globalForBoss = globalThis as unknown as { beadbenchBoss?: Promise<PgBoss> };

/**
 * How often pg-boss's maintenance (which fails expired active jobs into their retry) runs: a
 * quarter of the analysis job expiry, capped at pg-boss's default of 120 s. With the default
 * expiry (30 min) nothing changes; a short expiry (tests) gets a lost job noticed within seconds.
 */
export function maintenanceIntervalSeconds(expireInSeconds: number): number {
  return Math.max(1, Math.min(120, Math.floor(expireInSeconds / 4)));
}

function analyzeQueueOptions(): PgBoss.Queue {
  return {
    name: ANALYZE_QUEUE,
    // Crashes are retried with backoff; bad input is not (the handler completes the job
    // after marking the measurement failed with the reason). A job whose worker died stays
    // active until it expires; pg-boss's maintenance then fails it into a retry.
    retryLimit: 3,
    retryDelay: 5,
    retryBackoff: true,
    expireInSeconds: getEnv().ANALYSIS_JOB_EXPIRE_SECONDS,
  };
}

export function getBoss(): Promise<PgBoss> {
  globalForBoss.beadbenchBoss ??= (async () => {
    const expire = getEnv().ANALYSIS_JOB_EXPIRE_SECONDS;
    const boss = new PgBoss({
      connectionString: getEnv().DATABASE_URL,
      schema: "pgboss",
      max: 4,
      maintenanceIntervalSeconds: maintenanceIntervalSeconds(expire),
    });
    boss.on("error", (err) => console.error("[queue]", err.message));
    await boss.start();
    const options = analyzeQueueOptions();
    const existing = await boss.getQueue(ANALYZE_QUEUE);
    // createQueue applies options only when it creates the queue: bring an existing one up to date.
    if (!existing) await boss.createQueue(ANALYZE_QUEUE, options);
    else if (
      existing.expireInSeconds !== options.expireInSeconds ||
      existing.retryLimit !== options.retryLimit ||
      existing.retryDelay !== options.retryDelay ||
      existing.retryBackoff !== options.retryBackoff
    )
      await boss.updateQueue(ANALYZE_QUEUE, options);
    return boss;
  })();
  return globalForBoss.beadbenchBoss;
}

export async function enqueueAnalysis(measurementId: string): Promise<string | null> {
  const boss = await getBoss();
  // The expiry is also set per job, so a process started with another value (e.g. a test) cannot
  // change it for this job by updating the shared queue row in between.
  return boss.send(
    ANALYZE_QUEUE,
    { measurementId },
    {
      expireInSeconds: getEnv().ANALYSIS_JOB_EXPIRE_SECONDS,
    },
  );
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

/** Create the weekly-digest queue if needed and (re)register its Monday schedule (see scheduleReminders). */
export async function scheduleWeeklyDigest(boss: PgBoss): Promise<void> {
  if (!(await boss.getQueue(WEEKLY_DIGEST_QUEUE)))
    await boss.createQueue(WEEKLY_DIGEST_QUEUE, {
      name: WEEKLY_DIGEST_QUEUE,
      policy: "singleton",
      retryLimit: 2,
      retryDelay: 300,
      expireInSeconds: 15 * 60,
    });
  await boss.schedule(WEEKLY_DIGEST_QUEUE, WEEKLY_DIGEST_CRON, {}, { tz: "UTC" });
}
