import { plannerRequestSchema } from "@/contracts/planner";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json, parseJson } from "@/server/http/handler";
import { runPlanner } from "@/server/services/planner";

export const POST = handle(async (req) => {
  const actor = await requireApiActor();
  const input = await parseJson(req, plannerRequestSchema);
  return json(await runPlanner(getDb(), actor, input));
});
