import { createInstrumentSchema } from "@/contracts/instruments";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json, parseJson } from "@/server/http/handler";
import { createInstrument, listInstruments } from "@/server/services/instruments";

export const GET = handle(async () => {
  const actor = await requireApiActor();
  return json({ instruments: await listInstruments(getDb(), actor) });
});

export const POST = handle(async (req) => {
  const actor = await requireApiActor();
  const input = await parseJson(req, createInstrumentSchema);
  return json(await createInstrument(getDb(), actor, input), 201);
});
