import { z } from "zod";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json } from "@/server/http/handler";
import { markAsBaseline } from "@/server/services/measurements";

type Ctx = { params: Promise<{ id: string }> };

export const POST = handle(async (_req, { params }: Ctx) => {
  const actor = await requireApiActor();
  const id = z.uuid({ message: "Not a valid measurement id." }).parse((await params).id);
  return json(await markAsBaseline(getDb(), actor, id));
});
