import { z } from "zod";
import { signOffSchema } from "@/contracts/service-visits";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json, parseJson } from "@/server/http/handler";
import { signOffServiceVisit } from "@/server/services/service-visits";

type Ctx = { params: Promise<{ id: string }> };

export const POST = handle(async (req, { params }: Ctx) => {
  const actor = await requireApiActor();
  const id = z.uuid({ message: "Not a valid visit id." }).parse((await params).id);
  const { report } = await parseJson(req, signOffSchema);
  await signOffServiceVisit(getDb(), actor, id, report);
  return json({ id, signedOff: true });
});
