import { z } from "zod";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json } from "@/server/http/handler";
import { getMeasurementSummaryExport } from "@/server/services/exports";

type Ctx = { params: Promise<{ id: string }> };

/** The versioned summary record of a finished measurement (`beadbench.summary/1`). */
export const GET = handle(async (_req, { params }: Ctx) => {
  const actor = await requireApiActor();
  const id = z.uuid({ message: "Not a valid measurement id." }).parse((await params).id);
  return json(await getMeasurementSummaryExport(getDb(), actor, id));
});
