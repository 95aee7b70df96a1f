import { computeObjectiveStatus } from "../../lib/qc";
import type { Db } from "../db/client";
import { listLatestChecksByObjectives, listRecentMeasurementsByFacility } from "../db/queries/measurements";
import type { Actor } from "../auth/permissions";
import { getObjective } from "./instruments";

export async function getObjectiveOverview(db: Db, actor: Actor, id: string, now = new Date()) {
  const objective = await getObjective(db, actor, id);
  const [latest] = await listLatestChecksByObjectives(db, { objectiveIds: [id] });
  const ratios = (latest?.summary as { ratios?: { lateral?: number; axial?: number } } | null)?.ratios;
  const status = computeObjectiveStatus({
    now,
    lastCheckAt: latest?.acquiredAt ?? null,
    checkIntervalDays: objective.checkIntervalDays,
    latestRatios: ratios ? { lateral: ratios.lateral ?? null, axial: ratios.axial ?? null } : null,
    limits: { lateral: objective.lateralRatioLimit, axial: objective.axialRatioLimit },
  });
  const measurements = await listRecentMeasurementsByFacility(db, {
    facilityId: actor.facilityId,
    limit: 100,
    objectiveIds: [id],
    createdBy: actor.role === "researcher" ? actor.userId : undefined,
  });
  return { objective, status, measurements };
}
