/**
 * Out-of-spec alerts: when a facility check (not a researcher's sample) finishes
 * with a failing verdict, its facility's admins and staff get one e-mail. The sent
 * alert is an `audit_log` row `alert.sent` targeting the check (the first version of
 * a re-run chain, so re-running a failing check does not mail again); checking for
 * it, sending and recording happen in one transaction under a per-measurement
 * advisory lock, so a retried job or a second worker does not mail twice, and a
 * failed send records nothing.
 */
import { and, eq, sql } from "drizzle-orm";
import type { Db } from "../db/client";
import { auditLog, facilities, instruments, measurements, objectives } from "../db/schema";
import { insertAuditEntry } from "../db/queries/audit";
import { listMailRecipients } from "../db/queries/users";
import { outOfSpecAlertMail } from "../mail/templates";
import { sendToEachWithUnsubscribe } from "./mail-preferences";
import { appUrl } from "../../env";

export const ALERT_ACTION = "alert.sent";

export type AlertOutcome = "sent" | "not_failing" | "already_sent" | "no_recipients" | "not_found";

interface StoredVerdict {
  verdict?: { level?: string; headline?: string; evidence?: string[] };
}

/**
 * Mail the out-of-spec alert for a finished measurement, once. Throws when the
 * mail server refuses the message (nothing is recorded then); the worker catches
 * that so the analysis itself never fails because of mail.
 */
export async function sendOutOfSpecAlert(db: Db, measurementId: string): Promise<AlertOutcome> {
  const [row] = await db
    .select({
      id: measurements.id,
      parentId: measurements.parentId,
      facilityId: measurements.facilityId,
      purpose: measurements.purpose,
      status: measurements.status,
      summary: measurements.summary,
      acquiredAt: measurements.acquiredAt,
      objectiveName: objectives.name,
      instrumentName: instruments.name,
      facilityName: facilities.name,
    })
    .from(measurements)
    .innerJoin(objectives, eq(objectives.id, measurements.objectiveId))
    .leftJoin(instruments, eq(instruments.id, objectives.instrumentId))
    .innerJoin(facilities, eq(facilities.id, measurements.facilityId))
    .where(eq(measurements.id, measurementId))
    .limit(1);
  if (!row) return "not_found";
  const verdict = (row.summary as StoredVerdict | null)?.verdict;
  if (row.status !== "done" || row.purpose === "sample" || verdict?.level !== "fail") return "not_failing";

  // One alert per check: a re-run of the same stack (a new version) does not mail again.
  const checkId = row.parentId ?? row.id;
  return db.transaction(async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(hashtext(${`alert:${checkId}`}))`);
    const [already] = await tx
      .select({ id: auditLog.id })
      .from(auditLog)
      .where(
        and(
          eq(auditLog.facilityId, row.facilityId),
          eq(auditLog.action, ALERT_ACTION),
          eq(auditLog.targetId, checkId),
        ),
      )
      .limit(1);
    if (already) return "already_sent" as const;
    // People who switched alerts off (Settings or the mail's link) are left out.
    const people = await listMailRecipients(tx, {
      facilityId: row.facilityId,
      roles: ["admin", "staff"],
      kind: "alerts",
    });
    const to = people.map((p) => p.email);
    if (to.length === 0) return "no_recipients" as const;
    const mail = outOfSpecAlertMail({
      facilityName: row.facilityName,
      objectiveName: row.objectiveName,
      instrumentName: row.instrumentName,
      acquiredAt: row.acquiredAt,
      headline: verdict.headline ?? "Out of spec.",
      evidence: verdict.evidence ?? [],
      measurementUrl: appUrl(`/measurements/${row.id}`),
    });
    const sent = await sendToEachWithUnsubscribe(people, row.facilityId, "alerts", mail);
    await insertAuditEntry(tx, {
      facilityId: row.facilityId,
      userId: null,
      action: ALERT_ACTION,
      targetType: "measurement",
      targetId: checkId,
      details: {
        kind: "out_of_spec",
        measurementId: row.id,
        delivery: sent!.delivery,
        recipients: to.length,
      },
    });
    return "sent" as const;
  });
}
