/** The facility overview: every visible objective's status, due checks and recent measurements. */
import type { ObjectiveStatusResult } from "../../lib/qc";
import type { Db } from "../db/client";
import { listInstrumentsByFacility } from "../db/queries/instruments";
import { listMeasurementPage } from "../db/queries/measurements";
import type { Actor } from "../auth/permissions";
import { listObjectives, visibleInstrumentIds } from "./instruments";
import { getTrends } from "./logbook";

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
  // The page shows status, last check and its ratios only: no need for the rest of each summary.
  // Researchers see only their own recent measurements; engineers only their instruments'.
  const [trends, recent] = await Promise.all([
    getTrends(db, active, now, { ratiosOnly: true }),
    listMeasurementPage(db, {
      facilityId: actor.facilityId,
      limit: 10,
      createdBy: actor.role === "researcher" ? actor.userId : undefined,
      objectiveIds: onlyIds ? active.map((o) => o.id) : undefined,
    }),
  ]);
  const instrumentName = new Map(instruments.map((i) => [i.id, i.name]));

  const objectives: DashboardObjective[] = active.map((o) => {
    const trend = trends.get(o.id)!;
    const last = trend.points[trend.points.length - 1];
    return {
      id: o.id,
      name: o.name,
      na: o.na,
      immersion: o.immersion,
      instrumentName: o.instrumentId ? (instrumentName.get(o.instrumentId) ?? null) : null,
      lastCheckAt: last ? new Date(last.acquiredAt) : null,
      ratios: last ? { lateral: last.lateralRatio, axial: last.axialRatio } : null,
      status: trend.status,
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

  return { objectives, dueThisWeek, overdue, recent };
}
