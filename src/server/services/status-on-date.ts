/**
 * An objective's status as it was on a past day, and a methods paragraph a
 * researcher can paste into a paper. The status is rebuilt with `buildTrend` from
 * only the checks acquired and the events logged up to the end of that day (UTC),
 * with the clock set to that moment, and with the acceptance limits stored with
 * the check in force (the limits at the time it was analysed).
 *
 * Limits of the reconstruction: the objective's descriptive fields (name, NA,
 * immersion, serial number, check interval) are today's; a check re-analysed
 * later shows its latest analysis.
 */
import { z } from "zod";
import type { Db } from "../db/client";
import { listChecksByObjective, listEventsByObjective } from "../db/queries/logbook";
import { requirePermission, type Actor } from "../auth/permissions";
import { AppError } from "../http/errors";
import type { ObjectiveStatus } from "../../lib/qc";
import { buildTrend } from "./logbook";
import { getObjective } from "./instruments";

export const statusDateSchema = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, "Give the date as YYYY-MM-DD.")
  .refine(
    (d) =>
      !Number.isNaN(Date.parse(`${d}T00:00:00Z`)) && new Date(`${d}T00:00:00Z`).toISOString().startsWith(d),
    {
      message: "Not a calendar date.",
    },
  );

export interface CheckInForce {
  measurementId: string;
  acquiredAt: string;
  purpose: string;
  lateralFwhmUm: number | null;
  axialFwhmUm: number | null;
  theoryLateralUm: number | null;
  theoryAxialUm: number | null;
  lateralRatio: number | null;
  axialRatio: number | null;
  beadsUsed: number | null;
  beadDiameterNm: number | null;
  emissionWavelengthNm: number | null;
  modality: string | null;
  /** `formulaId@formulaVersion` of the theory. */
  formula: string | null;
  engineVersion: string | null;
  limits: { lateral: number; axial: number };
}

export interface StatusOnDate {
  objectiveId: string;
  date: string;
  /** The moment the status is taken at: the end of `date`, UTC. */
  asOf: string;
  status: ObjectiveStatus;
  reason: string;
  nextDueAt: string | null;
  check: CheckInForce | null;
  paragraph: string;
}

interface StoredSummary {
  headline?: { lateralFwhmUm?: number | null; axialFwhmUm?: number | null };
  theory?: { lateralNm?: number; axialNm?: number; formulaId?: string; formulaVersion?: string };
  ratios?: { lateral?: number | null; axial?: number | null };
  beads?: { used?: number };
  engineVersion?: string;
}

interface StoredParams {
  beadDiameterNm?: number;
  emissionWavelengthNm?: number;
  modality?: string;
  limits?: { lateral?: number; axial?: number };
}

const DAY_MS = 86_400_000;

const MODALITY_WORDS: Record<string, string> = {
  widefield: "widefield",
  confocal: "point-scanning confocal",
  "spinning-disk": "spinning-disk confocal",
  "two-photon": "two-photon",
  "light-sheet": "light-sheet",
};

const num = (x: number | null | undefined, digits: number) =>
  x == null || !Number.isFinite(x) ? "n/a" : x.toFixed(digits);

function methodsParagraph(
  objective: { name: string; na: number; immersion: string; serialNumber: string | null },
  date: string,
  status: { status: ObjectiveStatus; reason: string },
  check: CheckInForce | null,
): string {
  const lens =
    `the ${objective.name} objective (NA ${num(objective.na, 2)}, ${objective.immersion} immersion` +
    (objective.serialNumber ? `, serial number ${objective.serialNumber})` : ")");
  if (!check) {
    return `No bead check of ${lens} had been recorded by ${date}, so its point-spread function was not verified as of that date.`;
  }
  const checkDay = check.acquiredAt.slice(0, 10);
  const how = [
    check.modality ? (MODALITY_WORDS[check.modality] ?? check.modality) : null,
    check.emissionWavelengthNm != null ? `emission ${num(check.emissionWavelengthNm, 0)} nm` : null,
  ].filter(Boolean);
  const beads =
    check.beadDiameterNm != null
      ? `${num(check.beadDiameterNm, 0)} nm fluorescent beads`
      : "fluorescent beads";
  return [
    `The point-spread function of ${lens} was checked on ${checkDay} by imaging sub-resolution ${beads}` +
      (how.length ? ` (${how.join(", ")})` : "") +
      ".",
    `Across ${check.beadsUsed ?? "n/a"} beads, the median lateral and axial full widths at half maximum were ` +
      `${num(check.lateralFwhmUm, 3)} µm and ${num(check.axialFwhmUm, 3)} µm, that is ` +
      `${num(check.lateralRatio, 2)}× and ${num(check.axialRatio, 2)}× the theoretical ` +
      `${num(check.theoryLateralUm, 3)} µm and ${num(check.theoryAxialUm, 3)} µm ` +
      `(theory ${check.formula ?? "n/a"}; widths from one-dimensional Gaussian fits through each bead centre, ` +
      `corrected for bead size where reliable; analysis engine ${check.engineVersion ?? "n/a"}).`,
    `Against acceptance limits of ${num(check.limits.lateral, 2)}× (lateral) and ${num(check.limits.axial, 2)}× (axial) theory, ` +
      `the objective's status on ${date} was "${status.status}".`,
  ].join(" ");
}

/**
 * The status of an objective at the end of `date` (UTC), the check then in force,
 * and a methods paragraph.
 * @throws 403 without logbooks.read; 404 for an objective the actor cannot see;
 *   422 for a date in the future
 */
export async function getStatusOnDate(
  db: Db,
  actor: Actor,
  objectiveId: string,
  date: string,
  now = new Date(),
): Promise<StatusOnDate> {
  requirePermission(actor, "logbooks.read");
  const day = statusDateSchema.parse(date);
  const asOf = new Date(Date.parse(`${day}T00:00:00Z`) + DAY_MS - 1);
  if (Date.parse(`${day}T00:00:00Z`) > now.getTime()) {
    throw new AppError("unprocessable", "Choose a date up to today.");
  }
  const objective = await getObjective(db, actor, objectiveId);
  const [allChecks, allEvents] = await Promise.all([
    listChecksByObjective(db, { objectiveIds: [objective.id] }),
    listEventsByObjective(db, { objectiveIds: [objective.id] }),
  ]);
  const checks = allChecks.filter((c) => c.acquiredAt.getTime() <= asOf.getTime());
  const events = allEvents.filter((e) => e.occurredAt.getTime() <= asOf.getTime());

  let trend = buildTrend(objective, checks, events, asOf);
  const last = trend.points[trend.points.length - 1];
  const row = last ? checks.find((c) => c.id === last.measurementId) : undefined;
  const params = (row?.parameters ?? {}) as StoredParams;
  const limits = {
    lateral: params.limits?.lateral ?? objective.lateralRatioLimit,
    axial: params.limits?.axial ?? objective.axialRatioLimit,
  };
  if (limits.lateral !== objective.lateralRatioLimit || limits.axial !== objective.axialRatioLimit) {
    trend = buildTrend(
      { ...objective, lateralRatioLimit: limits.lateral, axialRatioLimit: limits.axial },
      checks,
      events,
      asOf,
    );
  }

  let check: CheckInForce | null = null;
  if (last && row) {
    const s = (row.summary ?? {}) as StoredSummary;
    check = {
      measurementId: row.id,
      acquiredAt: row.acquiredAt.toISOString(),
      purpose: row.purpose,
      lateralFwhmUm: s.headline?.lateralFwhmUm ?? null,
      axialFwhmUm: s.headline?.axialFwhmUm ?? null,
      theoryLateralUm: s.theory?.lateralNm != null ? s.theory.lateralNm / 1000 : null,
      theoryAxialUm: s.theory?.axialNm != null ? s.theory.axialNm / 1000 : null,
      lateralRatio: s.ratios?.lateral ?? null,
      axialRatio: s.ratios?.axial ?? null,
      beadsUsed: s.beads?.used ?? null,
      beadDiameterNm: params.beadDiameterNm ?? null,
      emissionWavelengthNm: params.emissionWavelengthNm ?? null,
      modality: params.modality ?? null,
      formula: s.theory?.formulaId ? `${s.theory.formulaId}@${s.theory.formulaVersion ?? "?"}` : null,
      engineVersion: s.engineVersion ?? null,
      limits,
    };
  }
  const status = trend.status;
  return {
    objectiveId: objective.id,
    date: day,
    asOf: asOf.toISOString(),
    status: status.status,
    reason: status.reason,
    nextDueAt: status.nextDueAt ? status.nextDueAt.toISOString() : null,
    check,
    paragraph: methodsParagraph(objective, day, status, check),
  };
}
