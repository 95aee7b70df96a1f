import type { Db } from "../db/client";
import { countMeasurements, isMeasurementCursor, listMeasurementPage } from "../db/queries/measurements";
import type { Actor } from "../auth/permissions";
import { getObjective } from "./instruments";
import { getObjectiveTrend } from "./logbook";

/** Measurements shown per page on the objective page. */
export const OBJECTIVE_MEASUREMENTS_PAGE = 50;

/**
 * The objective page: the objective, its trend, and one page of its measurements, newest
 * first. `before` is the previous page's `nextCursor`; an unknown value shows the first page.
 */
export async function getObjectiveOverview(
  db: Db,
  actor: Actor,
  id: string,
  now = new Date(),
  { before }: { before?: string } = {},
) {
  const objective = await getObjective(db, actor, id);
  const filter = {
    facilityId: actor.facilityId,
    objectiveIds: [id],
    createdBy: actor.role === "researcher" ? actor.userId : undefined,
  };
  const [trend, rows, measurementCount] = await Promise.all([
    getObjectiveTrend(db, actor, id, now),
    listMeasurementPage(db, {
      ...filter,
      limit: OBJECTIVE_MEASUREMENTS_PAGE + 1,
      before: before && isMeasurementCursor(before) ? before : undefined,
    }),
    countMeasurements(db, filter),
  ]);
  const measurements = rows.slice(0, OBJECTIVE_MEASUREMENTS_PAGE);
  const nextCursor = rows.length > OBJECTIVE_MEASUREMENTS_PAGE ? measurements.at(-1)!.cursor : null;
  return { objective, status: trend.status, trend, measurements, measurementCount, nextCursor };
}
