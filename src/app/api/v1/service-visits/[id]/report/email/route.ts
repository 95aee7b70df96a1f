import { z } from "zod";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json } from "@/server/http/handler";
import { emailServiceVisitReport } from "@/server/services/service-visits";

export const runtime = "nodejs";

type Ctx = { params: Promise<{ id: string }> };

/** Mail the visit report (PDF attached) to the facility's admins and the visit's engineer. */
export const POST = handle(async (_req, { params }: Ctx) => {
  const actor = await requireApiActor();
  const id = z.uuid({ message: "Not a valid visit id." }).parse((await params).id);
  return json(await emailServiceVisitReport(getDb(), actor, id));
});
