import { z } from "zod";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json } from "@/server/http/handler";
import { getBeadSections } from "@/server/services/bead-sections";
import { getStorage } from "@/server/storage/get-storage";

type Ctx = { params: Promise<{ id: string; bead: string }> };

/** The voxels around one bead (for the bead viewer). */
export const GET = handle(async (_req, { params }: Ctx) => {
  const actor = await requireApiActor();
  const p = await params;
  const id = z.uuid({ message: "Not a valid measurement id." }).parse(p.id);
  const bead = z.coerce.number().int().min(0).max(1_000_000).parse(p.bead);
  return json(await getBeadSections(getDb(), getStorage(), actor, id, bead));
});
