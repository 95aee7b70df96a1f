import { z } from "zod";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle } from "@/server/http/handler";
import { getAveragedPsfOmeTiff } from "@/server/services/exports";

export const runtime = "nodejs";

type Ctx = { params: Promise<{ id: string }> };

/** The averaged PSF of a finished measurement as a 32-bit float OME-TIFF. */
export const GET = handle(async (_req, { params }: Ctx) => {
  const actor = await requireApiActor();
  const id = z.uuid({ message: "Not a valid measurement id." }).parse((await params).id);
  const { bytes, fileName } = await getAveragedPsfOmeTiff(getDb(), actor, id);
  return new Response(bytes as Uint8Array<ArrayBuffer>, {
    status: 200,
    headers: {
      "Content-Type": "image/tiff",
      "Content-Length": String(bytes.byteLength),
      "Content-Disposition": `attachment; filename="${fileName}"`,
      "Cache-Control": "private, no-store",
    },
  });
});
