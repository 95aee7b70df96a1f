/**
 * Queue handler: send the day's reminder digests. The payload is parsed with zod
 * (a scheduled job carries `{}`; `now` may be given for a catch-up run). Errors
 * are reported and returned, never thrown past the handler: a digest recorded as
 * sent is skipped on the next run anyway, and tomorrow's run tries again.
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
  try {
    const now = parsed.data?.now ? new Date(parsed.data.now) : new Date();
    const runs = await sendReminderDigests(getDb(), { now });
    const count = (o: ReminderRun["outcome"]) => runs.filter((r) => r.outcome === o).length;
    console.log(
      `[reminders] ${count("sent")} sent, ${count("already_sent")} already sent today, ` +
        `${count("nothing_due")} with nothing due, ${count("no_recipients")} without recipients, ${count("failed")} failed`,
    );
    return runs;
  } catch (err) {
    console.error("[reminders] run failed:", err instanceof Error ? err.message : "unknown error");
    return [];
  }
}
