import { createMeasurementSchema, measurementListQuerySchema } from "@/contracts/measurements";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json, parseJson } from "@/server/http/handler";
import { createMeasurement, listMeasurements } from "@/server/services/measurements";

export const GET = handle(async (req) => {
  const actor = await requireApiActor();
  const search = new URL(req.url).searchParams;
  const query = measurementListQuerySchema.parse({
    objectiveId: search.get("objectiveId") ?? undefined,
    purpose: search.get("purpose") ?? undefined,
    status: search.get("status") ?? undefined,
    limit: search.get("limit") ?? undefined,
    before: search.get("before") ?? undefined,
  });
  return json(await listMeasurements(getDb(), actor, query));
});

export const POST = handle(async (req) => {
  const actor = await requireApiActor();
  const input = await parseJson(req, createMeasurementSchema);
  return json(await createMeasurement(getDb(), actor, input), 202);
});
