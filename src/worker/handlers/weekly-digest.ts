/**
 * Queue handler: send the week's summaries to each facility's admins. The payload
 * is parsed with zod (a scheduled job carries `{}`; `now` may be given for a
 * catch-up run); a malformed payload is logged and dropped. When a facility's
 * summary could not be sent the handler throws, so pg-boss retries the job (the
 * retry skips facilities already served that week).
 */
import { z } from "zod";
import { getDb } from "../../server/db/client";
import { sendWeeklyDigests, type WeeklyDigestRun } from "../../server/services/weekly-digest";

export const weeklyDigestJobSchema = z
  .object({ now: z.iso.datetime({ offset: true }).optional() })
  .loose()
  .nullish();

export async function sendWeeklyDigest(data: unknown): Promise<WeeklyDigestRun[]> {
  const parsed = weeklyDigestJobSchema.safeParse(data);
  if (!parsed.success) {
    console.error("[weekly-digest] ignoring a job with a malformed payload");
    return [];
  }
  const now = parsed.data?.now ? new Date(parsed.data.now) : new Date();
  const runs = await sendWeeklyDigests(getDb(), { now });
  const count = (o: WeeklyDigestRun["outcome"]) => runs.filter((r) => r.outcome === o).length;
  console.log(
    `[weekly-digest] ${count("sent")} sent, ${count("already_sent")} already sent this week, ` +
      `${count("no_recipients")} without recipients, ${count("failed")} failed`,
  );
  if (count("failed") > 0)
    throw new Error(`${count("failed")} weekly summary(ies) could not be sent; will retry`);
  return runs;
}
