import type { Db } from "../db/client";
import { listRecentMeasurementsByFacility } from "../db/queries/measurements";
import type { Actor } from "../auth/permissions";
import { getObjective } from "./instruments";
import { getObjectiveTrend } from "./logbook";

export async function getObjectiveOverview(db: Db, actor: Actor, id: string, now = new Date()) {
  const objective = await getObjective(db, actor, id);
  const trend = await getObjectiveTrend(db, actor, id, now);
  const measurements = await listRecentMeasurementsByFacility(db, {
    facilityId: actor.facilityId,
    limit: 100,
    objectiveIds: [id],
    createdBy: actor.role === "researcher" ? actor.userId : undefined,
  });
  return { objective, status: trend.status, trend, measurements };
}
