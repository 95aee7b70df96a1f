import { z } from "zod";
import { beadListQuerySchema } from "@/contracts/measurements";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json } from "@/server/http/handler";
import { listBeads } from "@/server/services/measurements";
import { beadsToCsv, beadsToPublicRows } from "@/server/services/bead-export";

type Ctx = { params: Promise<{ id: string }> };

export const GET = handle(async (req, { params }: Ctx) => {
  const actor = await requireApiActor();
  const id = z.uuid({ message: "Not a valid measurement id." }).parse((await params).id);
  const search = new URL(req.url).searchParams;
  const query = beadListQuerySchema.parse({
    format: search.get("format") ?? undefined,
    limit: search.get("limit") ?? undefined,
    after: search.get("after") ?? undefined,
  });
  if (query.format === "csv") {
    const rows = beadsToPublicRows(await listBeads(getDb(), actor, id));
    return new Response(beadsToCsv(rows), {
      headers: {
        "Content-Type": "text/csv; charset=utf-8",
        "Content-Disposition": `attachment; filename="beads-${id}.csv"`,
      },
    });
  }
  const page = await listBeads(getDb(), actor, id, { limit: query.limit, after: query.after });
  return json({ beads: beadsToPublicRows(page.beads), next: page.next });
});
