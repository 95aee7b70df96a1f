import { z } from "zod";
import { patchObjectiveSchema } from "@/contracts/instruments";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json, parseJson } from "@/server/http/handler";
import { getObjective, patchObjective } from "@/server/services/instruments";

type Ctx = { params: Promise<{ id: string }> };
const idSchema = z.uuid({ message: "Not a valid objective id." });

export const GET = handle(async (_req, { params }: Ctx) => {
  const actor = await requireApiActor();
  return json(await getObjective(getDb(), actor, idSchema.parse((await params).id)));
});

export const PATCH = handle(async (req, { params }: Ctx) => {
  const actor = await requireApiActor();
  const id = idSchema.parse((await params).id);
  const input = await parseJson(req, patchObjectiveSchema);
  return json(await patchObjective(getDb(), actor, id, input));
});
