import { z } from "zod";
import { rerunMeasurementSchema } from "@/contracts/measurements";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json, parseJson } from "@/server/http/handler";
import { rerunMeasurement } from "@/server/services/measurements";

type Ctx = { params: Promise<{ id: string }> };

export const POST = handle(async (req, { params }: Ctx) => {
  const actor = await requireApiActor();
  const id = z.uuid({ message: "Not a valid measurement id." }).parse((await params).id);
  const input = await parseJson(req, rerunMeasurementSchema);
  return json(await rerunMeasurement(getDb(), actor, id, input), 202);
});
