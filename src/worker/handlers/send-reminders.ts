/**
 * Queue handler: send the day's reminder digests. The payload is parsed with zod
 * (a scheduled job carries `{}`; `now` may be given for a catch-up run); a
 * malformed payload is logged and dropped, not retried. When a facility's digest
 * could not be sent, the handler throws so pg-boss retries the job later (the
 * retry skips facilities already served that day); an exception inside a pg-boss
 * handler fails the job, never the worker process.
 */
import { z } from "zod";
import { getDb } from "../../server/db/client";
import { sendReminderDigests, type ReminderRun } from "../../server/services/reminders";

export const sendRemindersJobSchema = z
  .object({ now: z.iso.datetime({ offset: true }).optional() })
  .loose()
  .nullish();

export async function sendReminders(data: unknown): Promise<ReminderRun[]> {
  const parsed = sendRemindersJobSchema.safeParse(data);
  if (!parsed.success) {
    console.error("[reminders] ignoring a job with a malformed payload");
    return [];
  }
  const now = parsed.data?.now ? new Date(parsed.data.now) : new Date();
  const runs = await sendReminderDigests(getDb(), { now });
  const count = (o: ReminderRun["outcome"]) => runs.filter((r) => r.outcome === o).length;
  console.log(
    `[reminders] ${count("sent")} sent, ${count("already_sent")} already sent today, ` +
      `${count("nothing_due")} with nothing due, ${count("no_recipients")} without recipients, ${count("failed")} failed`,
  );
  if (count("failed") > 0)
    throw new Error(`${count("failed")} reminder digest(s) could not be sent; will retry`);
  return runs;
}
