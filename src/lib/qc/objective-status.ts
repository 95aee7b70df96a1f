/**
 * An objective's status from its latest check, its schedule and any statistical
 * alarm, with the reason in plain words.
 *
 * Notes: the hierarchy follows the usual QC order — a spec breach outranks a
 * statistical alarm, which outranks a warning (QC-PRACTICE.md §3.3) — with an
 * overdue check ranked after a spec breach: an out-of-spec lens is restricted
 * whether or not its next check is due. Ratios are one-sided: a ratio well below
 * 1 is not "better optics" but usually wrong metadata, so it turns into a watch
 * with a metadata prompt (common practice).
 */
export type ObjectiveStatus = "in spec" | "watch" | "out of spec" | "overdue" | "no data";

export interface ObjectiveStatusInput {
  /** The clock, injected so the function stays pure. */
  now: Date;
  /** When the latest completed check (routine, baseline or post-service) was acquired. */
  lastCheckAt: Date | null;
  checkIntervalDays: number;
  /** Median measured/theoretical FWHM ratios of that check. */
  latestRatios: { lateral: number | null; axial: number | null } | null;
  /** Acceptance limits on those ratios. @default 1.5 and 1.5 in the objective's settings */
  limits: { lateral: number; axial: number };
  /** A statistical alarm or warning from the control charts, if any. */
  statistical?: { level: "alarm" | "warning"; reason: string } | null;
  /** Ratios below this prompt a metadata check. @default 0.8 */
  implausiblyGoodRatio?: number;
}

export interface ObjectiveStatusResult {
  status: ObjectiveStatus;
  reason: string;
  /** When the next check is due (null without any check). */
  nextDueAt: Date | null;
  /** Sort key: higher is more urgent. */
  urgency: number;
}

const DAY_MS = 86_400_000;

function fmt(x: number): string {
  return x.toFixed(2);
}

/** Decide an objective's status; see the module notes for the order of the rules. */
export function computeObjectiveStatus(input: ObjectiveStatusInput): ObjectiveStatusResult {
  const {
    now,
    lastCheckAt,
    checkIntervalDays,
    latestRatios,
    limits,
    statistical,
    implausiblyGoodRatio = 0.8,
  } = input;
  if (!(checkIntervalDays > 0))
    throw new RangeError(`checkIntervalDays must be > 0, got ${checkIntervalDays}`);
  if (!lastCheckAt) {
    return {
      status: "no data",
      reason: "No bead check has been recorded for this objective yet.",
      nextDueAt: null,
      urgency: 2.5,
    };
  }
  const nextDueAt = new Date(lastCheckAt.getTime() + checkIntervalDays * DAY_MS);
  const breaches: string[] = [];
  if (latestRatios?.lateral != null && latestRatios.lateral >= limits.lateral) {
    breaches.push(`lateral FWHM is ${fmt(latestRatios.lateral)}× theory (limit ${fmt(limits.lateral)})`);
  }
  if (latestRatios?.axial != null && latestRatios.axial >= limits.axial) {
    breaches.push(`axial FWHM is ${fmt(latestRatios.axial)}× theory (limit ${fmt(limits.axial)})`);
  }
  if (breaches.length) {
    return {
      status: "out of spec",
      reason: `Latest check: ${breaches.join("; ")}. Restrict the objective and follow the troubleshooting steps.`,
      nextDueAt,
      urgency: 5,
    };
  }
  const daysSince = Math.floor((now.getTime() - lastCheckAt.getTime()) / DAY_MS);
  if (now.getTime() > nextDueAt.getTime()) {
    return {
      status: "overdue",
      reason: `Last check ${daysSince} days ago; the interval is ${checkIntervalDays} days.`,
      nextDueAt,
      urgency: 4,
    };
  }
  if (statistical) {
    return {
      status: "watch",
      reason: `${statistical.reason}${statistical.level === "warning" ? " (warning only)" : ""}. Still within the acceptance limits.`,
      nextDueAt,
      urgency: statistical.level === "alarm" ? 3 : 2,
    };
  }
  const low = [
    latestRatios?.lateral != null && latestRatios.lateral < implausiblyGoodRatio
      ? `lateral ${fmt(latestRatios.lateral)}`
      : null,
    latestRatios?.axial != null && latestRatios.axial < implausiblyGoodRatio
      ? `axial ${fmt(latestRatios.axial)}`
      : null,
  ].filter(Boolean);
  if (low.length) {
    return {
      status: "watch",
      reason: `Ratio to theory below ${implausiblyGoodRatio} (${low.join(", ")}): check the pixel size, NA and wavelength recorded with the stack.`,
      nextDueAt,
      urgency: 2,
    };
  }
  return {
    status: "in spec",
    reason: `Within the acceptance limits at the last check (${daysSince} days ago).`,
    nextDueAt,
    urgency: 1,
  };
}
