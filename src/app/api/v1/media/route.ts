import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json } from "@/server/http/handler";
import { listMediaForActor } from "@/server/services/media";

export const GET = handle(async () => {
  const actor = await requireApiActor();
  return json({ media: await listMediaForActor(getDb(), actor) });
});
