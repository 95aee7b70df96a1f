/**
 * Run a scheduled job once per facility. One facility's failure (e.g. the mail
 * server refusing a message) is logged and reported as that facility's result;
 * the others still run.
 */
import type { Db } from "../db/client";
import { facilities } from "../db/schema";

export interface FacilityRef {
  id: string;
  name: string;
  timezone: string;
}

export async function forEachFacility<R>(
  db: Db,
  label: string,
  run: (facility: FacilityRef) => Promise<R>,
  failed: (facility: FacilityRef) => R,
): Promise<R[]> {
  const all = await db
    .select({ id: facilities.id, name: facilities.name, timezone: facilities.timezone })
    .from(facilities)
    .orderBy(facilities.name);
  const results: R[] = [];
  for (const facility of all) {
    try {
      results.push(await run(facility));
    } catch (err) {
      console.error(
        `[${label}] facility ${facility.id} failed:`,
        err instanceof Error ? err.message : "unknown error",
      );
      results.push(failed(facility));
    }
  }
  return results;
}
