import { createServiceVisitSchema } from "@/contracts/service-visits";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json, parseJson } from "@/server/http/handler";
import { createServiceVisit, listServiceVisits } from "@/server/services/service-visits";

export const GET = handle(async () => {
  const actor = await requireApiActor();
  return json({ visits: await listServiceVisits(getDb(), actor) });
});

export const POST = handle(async (req) => {
  const actor = await requireApiActor();
  const input = await parseJson(req, createServiceVisitSchema);
  return json(await createServiceVisit(getDb(), actor, input), 201);
});
