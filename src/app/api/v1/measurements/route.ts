import { createMeasurementSchema } from "@/contracts/measurements";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json, parseJson } from "@/server/http/handler";
import { createMeasurement } from "@/server/services/measurements";

export const POST = handle(async (req) => {
  const actor = await requireApiActor();
  const input = await parseJson(req, createMeasurementSchema);
  return json(await createMeasurement(getDb(), actor, input), 202);
});
