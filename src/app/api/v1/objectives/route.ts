import { createObjectiveSchema } from "@/contracts/instruments";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json, parseJson } from "@/server/http/handler";
import { createObjective, listObjectives } from "@/server/services/instruments";

export const GET = handle(async () => {
  const actor = await requireApiActor();
  return json({ objectives: await listObjectives(getDb(), actor) });
});

export const POST = handle(async (req) => {
  const actor = await requireApiActor();
  const input = await parseJson(req, createObjectiveSchema);
  return json(await createObjective(getDb(), actor, input), 201);
});
