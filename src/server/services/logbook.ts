/**
 * An objective's logbook: its checks over time split into baseline epochs, the
 * control charts of the current epoch, the rate of change, events, and the status
 * that follows from all of it.
 */
import {
  baselineBand,
  computeControlChart,
  computeObjectiveStatus,
  theilSenSlope,
  type BaselineBand,
  type ControlChart,
  type ObjectiveStatusResult,
} from "../../lib/qc";
import { EPOCH_EVENTS, type CreateLogbookEvent } from "../../contracts/logbook";
import type { Db } from "../db/client";
import type { Objective } from "../db/schema";
import { insertAuditEntry } from "../db/queries/audit";
import { insertLogbookEvent, listChecksByObjective, listEventsByObjective } from "../db/queries/logbook";
import { requirePermission, type Actor } from "../auth/permissions";
import { getObjective } from "./instruments";

export interface TrendPoint {
  measurementId: string;
  acquiredAt: string;
  purpose: string;
  epoch: number;
  lateralRatio: number | null;
  axialRatio: number | null;
  lateralFwhmUm: number | null;
  axialFwhmUm: number | null;
  axialAsymmetry: number | null;
  medianSnr: number | null;
  effectiveRi: number | null;
  beadsUsed: number | null;
  formulaId: string | null;
  /** Median min/max lateral FWHM over the field (1 = round). */
  lateralAsymmetry: number | null;
  /** Peak-to-valley of the best-focus plane over the field, µm; null with too few beads. */
  planarityUm: number | null;
}

interface StoredSummary {
  ratios?: { lateral?: number | null; axial?: number | null };
  headline?: { lateralFwhmUm?: number | null; axialFwhmUm?: number | null };
  widths?: { medianAxialAsymmetry?: number | null; medianSnr?: number | null };
  effectiveRi?: { sampleRi?: number | null };
  beads?: { used?: number };
  theory?: { formulaId?: string; formulaVersion?: string };
  shape?: { lateralAsymmetry?: number | null; planarityUm?: number | null };
}

type Check = Awaited<ReturnType<typeof listChecksByObjective>>[number];
type Event = Awaited<ReturnType<typeof listEventsByObjective>>[number];

/** Keep only the latest version of each re-run chain. */
function latestVersions(checks: Check[]): Check[] {
  const byRoot = new Map<string, Check>();
  for (const c of checks) {
    const root = c.parentId ?? c.id;
    const prev = byRoot.get(root);
    if (!prev || c.version > prev.version) byRoot.set(root, c);
  }
  return [...byRoot.values()].sort((a, b) => a.acquiredAt.getTime() - b.acquiredAt.getTime());
}

function toPoints(checks: Check[], events: Event[]): TrendPoint[] {
  const starts = events
    .filter((e) => (EPOCH_EVENTS as readonly string[]).includes(e.kind))
    .map((e) => e.occurredAt.getTime());
  let epoch = 0;
  let lastEpochStart = -Infinity;
  return checks.map((c) => {
    const t = c.acquiredAt.getTime();
    // A new epoch starts at an epoch event, or at a baseline / post-service check itself.
    const eventStart = starts.filter((s) => s <= t).pop() ?? -Infinity;
    const isStart = c.purpose === "baseline" || c.purpose === "post-service";
    if (eventStart > lastEpochStart || (isStart && t > lastEpochStart)) {
      if (lastEpochStart !== -Infinity || eventStart !== -Infinity) epoch++;
      lastEpochStart = isStart ? t : eventStart;
    }
    const s = (c.summary ?? {}) as StoredSummary;
    return {
      measurementId: c.id,
      acquiredAt: c.acquiredAt.toISOString(),
      purpose: c.purpose,
      epoch,
      lateralRatio: s.ratios?.lateral ?? null,
      axialRatio: s.ratios?.axial ?? null,
      lateralFwhmUm: s.headline?.lateralFwhmUm ?? null,
      axialFwhmUm: s.headline?.axialFwhmUm ?? null,
      axialAsymmetry: s.widths?.medianAxialAsymmetry ?? null,
      medianSnr: s.widths?.medianSnr ?? null,
      effectiveRi: s.effectiveRi?.sampleRi ?? null,
      beadsUsed: s.beads?.used ?? null,
      formulaId: s.theory ? `${s.theory.formulaId}@${s.theory.formulaVersion}` : null,
      lateralAsymmetry: s.shape?.lateralAsymmetry ?? null,
      planarityUm: s.shape?.planarityUm ?? null,
    };
  });
}

export interface ObjectiveTrend {
  objectiveId: string;
  points: TrendPoint[];
  events: Array<{ id: string; kind: string; note: string | null; occurredAt: string; by: string | null }>;
  currentEpoch: number;
  charts: { lateral: ControlChart; axial: ControlChart };
  /**
   * Figures with no universal limit, against this epoch's baseline (advisory: they do not
   * change the status). Lateral asymmetry is worse downwards, planarity upwards.
   */
  shape: { lateralAsymmetry: BaselineBand; planarityUm: BaselineBand };
  /** Rate of change of the ratios over the last 12 months (per 30 days), Theil–Sen with a 95 % interval. */
  slopePerMonth: { lateral: ReturnType<typeof theilSenSlope>; axial: ReturnType<typeof theilSenSlope> };
  status: ObjectiveStatusResult;
  /** True when the current epoch mixes theory formulas (its points are not comparable). */
  mixedFormulas: boolean;
}

const MONTH_MS = 30 * 86_400_000;

export function buildTrend(
  objective: Objective,
  checks: Check[],
  events: Event[],
  now: Date,
): ObjectiveTrend {
  const points = toPoints(latestVersions(checks), events);
  const currentEpoch = points.length ? points[points.length - 1]!.epoch : 0;
  const inEpoch = points.filter((p) => p.epoch === currentEpoch);
  const series = (k: "lateralRatio" | "axialRatio" | "lateralAsymmetry" | "planarityUm") =>
    inEpoch.filter((p) => p[k] != null).map((p) => ({ id: p.measurementId, value: p[k]! }));
  // Phase I / Phase II: the epoch's first checks (a baseline block of at least 5,
  // growing to 20 as history accumulates) set the limits that later checks are
  // judged against, so a slow drift cannot widen its own limits (QC-PRACTICE.md §3.4).
  const baselineCount = (n: number) => (n <= 5 ? n : Math.max(5, Math.min(20, Math.floor(n / 2))));
  const lat = series("lateralRatio");
  const ax = series("axialRatio");
  const lateral = computeControlChart(lat, { baselineCount: baselineCount(lat.length) });
  const axial = computeControlChart(ax, { baselineCount: baselineCount(ax.length) });
  const band = (k: "lateralAsymmetry" | "planarityUm", worse: "up" | "down") => {
    const pts = series(k);
    return baselineBand(pts, worse, baselineCount(pts.length));
  };
  const shape = {
    lateralAsymmetry: band("lateralAsymmetry", "down"),
    planarityUm: band("planarityUm", "up"),
  };

  const yearAgo = now.getTime() - 12 * MONTH_MS;
  const recent = points.filter((p) => new Date(p.acquiredAt).getTime() >= yearAgo);
  const slope = (k: "lateralRatio" | "axialRatio") => {
    const r = recent.filter((p) => p[k] != null);
    return theilSenSlope(
      r.map((p) => new Date(p.acquiredAt).getTime() / MONTH_MS),
      r.map((p) => p[k]!),
    );
  };

  // The most urgent statistical signal on the latest point of either chart.
  const lastIdx = (c: ControlChart) => c.n - 1;
  const latestHits = [
    ...lateral.hits.filter((h) => h.index === lastIdx(lateral)).map((h) => ({ ...h, axis: "Lateral ratio" })),
    ...axial.hits.filter((h) => h.index === lastIdx(axial)).map((h) => ({ ...h, axis: "Axial ratio" })),
  ];
  const alarm = latestHits.find((h) => h.level === "alarm") ?? latestHits.find((h) => h.level === "warning");
  const last = points[points.length - 1];
  const status = computeObjectiveStatus({
    now,
    lastCheckAt: last ? new Date(last.acquiredAt) : null,
    checkIntervalDays: objective.checkIntervalDays,
    latestRatios: last ? { lateral: last.lateralRatio, axial: last.axialRatio } : null,
    limits: { lateral: objective.lateralRatioLimit, axial: objective.axialRatioLimit },
    statistical: alarm
      ? { level: alarm.level === "alarm" ? "alarm" : "warning", reason: `${alarm.axis}: ${alarm.message}` }
      : null,
  });
  const formulas = new Set(inEpoch.map((p) => p.formulaId).filter(Boolean));
  const trend = {
    objectiveId: objective.id,
    points,
    events: events.map((e) => ({
      id: e.id,
      kind: e.kind,
      note: e.note,
      occurredAt: e.occurredAt.toISOString(),
      by: e.createdByName,
    })),
    currentEpoch,
    charts: { lateral, axial },
    shape,
    status,
    mixedFormulas: formulas.size > 1,
  } as ObjectiveTrend;
  // Theil–Sen is O(n²) in the year's checks and only the objective page and the trend API show
  // it; the dashboard, reminders, digests and visit reports need the status only. So the slopes
  // are computed on first read (an enumerable getter: JSON.stringify and spreads still see them).
  let slopes: ObjectiveTrend["slopePerMonth"] | undefined;
  Object.defineProperty(trend, "slopePerMonth", {
    enumerable: true,
    get: () => (slopes ??= { lateral: slope("lateralRatio"), axial: slope("axialRatio") }),
  });
  return trend;
}

export async function getObjectiveTrend(
  db: Db,
  actor: Actor,
  objectiveId: string,
  now = new Date(),
): Promise<ObjectiveTrend> {
  requirePermission(actor, "logbooks.read");
  const objective = await getObjective(db, actor, objectiveId);
  const [checks, events] = await Promise.all([
    listChecksByObjective(db, { objectiveIds: [objectiveId] }),
    listEventsByObjective(db, { objectiveIds: [objectiveId] }),
  ]);
  return buildTrend(objective, checks, events, now);
}

/**
 * Trends of many objectives at once (the dashboard, reminders). With `ratiosOnly` the points
 * carry only the ratios (no widths, SNR or formula, so `mixedFormulas` is false): enough for
 * the status and the last check, and much less to read for a facility's whole history.
 */
export async function getTrends(
  db: Db,
  objectives: Objective[],
  now = new Date(),
  { ratiosOnly = false }: { ratiosOnly?: boolean } = {},
): Promise<Map<string, ObjectiveTrend>> {
  const ids = objectives.map((o) => o.id);
  const [checks, events] = await Promise.all([
    listChecksByObjective(db, { objectiveIds: ids, ratiosOnly }),
    listEventsByObjective(db, { objectiveIds: ids }),
  ]);
  return new Map(
    objectives.map((o) => [
      o.id,
      buildTrend(
        o,
        checks.filter((c) => c.objectiveId === o.id),
        events.filter((e) => e.objectiveId === o.id),
        now,
      ),
    ]),
  );
}

export async function addLogbookEvent(db: Db, actor: Actor, objectiveId: string, input: CreateLogbookEvent) {
  requirePermission(actor, input.kind === "baseline_start" ? "baselines.manage" : "instruments.manage");
  const objective = await getObjective(db, actor, objectiveId);
  return db.transaction(async (tx) => {
    const row = await insertLogbookEvent(tx, {
      facilityId: actor.facilityId,
      objectiveId: objective.id,
      kind: input.kind,
      note: input.note ?? null,
      occurredAt: input.occurredAt ? new Date(input.occurredAt) : new Date(),
      createdBy: actor.userId,
    });
    await insertAuditEntry(tx, {
      facilityId: actor.facilityId,
      userId: actor.userId,
      action: "logbook.event",
      targetType: "objective",
      targetId: objective.id,
      details: { kind: input.kind },
    });
    return { id: row.id, kind: row.kind, note: row.note, occurredAt: row.occurredAt.toISOString() };
  });
}
