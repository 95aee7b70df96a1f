/** The facility overview: every visible objective's status, due checks and recent measurements. */
import { computeObjectiveStatus, type ObjectiveStatusResult } from "../../lib/qc";
import type { Db } from "../db/client";
import { listInstrumentsByFacility } from "../db/queries/instruments";
import { listLatestChecksByObjectives, listRecentMeasurementsByFacility } from "../db/queries/measurements";
import type { Actor } from "../auth/permissions";
import { listObjectives, visibleInstrumentIds } from "./instruments";

interface SummaryRatios {
  ratios?: { lateral?: number | null; axial?: number | null };
}

export interface DashboardObjective {
  id: string;
  name: string;
  na: number;
  immersion: string;
  instrumentName: string | null;
  lastCheckAt: Date | null;
  ratios: { lateral: number | null; axial: number | null } | null;
  status: ObjectiveStatusResult;
}

export async function getDashboard(db: Db, actor: Actor, now = new Date()) {
  const onlyIds = await visibleInstrumentIds(db, actor);
  const [objs, instruments] = await Promise.all([
    listObjectives(db, actor),
    listInstrumentsByFacility(db, { facilityId: actor.facilityId, onlyIds }),
  ]);
  const active = objs.filter((o) => !o.retired);
  const latest = await listLatestChecksByObjectives(db, { objectiveIds: active.map((o) => o.id) });
  const byObjective = new Map(latest.map((l) => [l.objectiveId, l]));
  const instrumentName = new Map(instruments.map((i) => [i.id, i.name]));

  const objectives: DashboardObjective[] = active.map((o) => {
    const check = byObjective.get(o.id);
    const r = (check?.summary as SummaryRatios | null)?.ratios;
    const ratios = r ? { lateral: r.lateral ?? null, axial: r.axial ?? null } : null;
    return {
      id: o.id,
      name: o.name,
      na: o.na,
      immersion: o.immersion,
      instrumentName: o.instrumentId ? (instrumentName.get(o.instrumentId) ?? null) : null,
      lastCheckAt: check?.acquiredAt ?? null,
      ratios,
      status: computeObjectiveStatus({
        now,
        lastCheckAt: check?.acquiredAt ?? null,
        checkIntervalDays: o.checkIntervalDays,
        latestRatios: ratios,
        limits: { lateral: o.lateralRatioLimit, axial: o.axialRatioLimit },
      }),
    };
  });
  objectives.sort((a, b) => b.status.urgency - a.status.urgency || a.name.localeCompare(b.name));

  const weekAhead = now.getTime() + 7 * 86_400_000;
  const dueThisWeek = objectives.filter(
    (o) =>
      o.status.nextDueAt &&
      o.status.nextDueAt.getTime() >= now.getTime() &&
      o.status.nextDueAt.getTime() <= weekAhead,
  );
  const overdue = objectives.filter((o) => o.status.status === "overdue");

  // Researchers see only their own measurements; engineers only their instruments'.
  const recent = await listRecentMeasurementsByFacility(db, {
    facilityId: actor.facilityId,
    limit: 10,
    createdBy: actor.role === "researcher" ? actor.userId : undefined,
    objectiveIds: onlyIds ? active.map((o) => o.id) : undefined,
  });
  return { objectives, dueThisWeek, overdue, recent };
}
