import { z } from "zod";
import { createLogbookEventSchema } from "@/contracts/logbook";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json, parseJson } from "@/server/http/handler";
import { addLogbookEvent } from "@/server/services/logbook";

type Ctx = { params: Promise<{ id: string }> };

export const POST = handle(async (req, { params }: Ctx) => {
  const actor = await requireApiActor();
  const id = z.uuid({ message: "Not a valid objective id." }).parse((await params).id);
  const input = await parseJson(req, createLogbookEventSchema);
  return json(await addLogbookEvent(getDb(), actor, id, input), 201);
});
