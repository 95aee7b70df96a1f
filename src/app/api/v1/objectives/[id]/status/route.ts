import { z } from "zod";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json } from "@/server/http/handler";
import { getStatusOnDate, statusDateSchema } from "@/server/services/status-on-date";

type Ctx = { params: Promise<{ id: string }> };

/** GET /api/v1/objectives/:id/status?date=YYYY-MM-DD — the status as it was that day, with a methods paragraph. */
export const GET = handle(async (req, { params }: Ctx) => {
  const actor = await requireApiActor();
  const id = z.uuid({ message: "Not a valid objective id." }).parse((await params).id);
  const date = statusDateSchema.parse(new URL(req.url).searchParams.get("date") ?? "");
  return json(await getStatusOnDate(getDb(), actor, id, date));
});
