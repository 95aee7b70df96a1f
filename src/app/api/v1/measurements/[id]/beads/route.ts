import { z } from "zod";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json } from "@/server/http/handler";
import { listBeads } from "@/server/services/measurements";
import { beadsToCsv, beadsToPublicRows } from "@/server/services/bead-export";

type Ctx = { params: Promise<{ id: string }> };

export const GET = handle(async (req, { params }: Ctx) => {
  const actor = await requireApiActor();
  const id = z.uuid({ message: "Not a valid measurement id." }).parse((await params).id);
  const format = z
    .enum(["json", "csv"], { message: "format must be json or csv" })
    .default("json")
    .parse(new URL(req.url).searchParams.get("format") ?? undefined);
  const rows = beadsToPublicRows(await listBeads(getDb(), actor, id));
  if (format === "csv") {
    return new Response(beadsToCsv(rows), {
      headers: {
        "Content-Type": "text/csv; charset=utf-8",
        "Content-Disposition": `attachment; filename="beads-${id}.csv"`,
      },
    });
  }
  return json({ beads: rows });
});
