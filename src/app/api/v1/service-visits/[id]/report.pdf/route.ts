import { z } from "zod";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle } from "@/server/http/handler";
import { getServiceVisitReportPdf } from "@/server/services/service-visits";

export const runtime = "nodejs";

type Ctx = { params: Promise<{ id: string }> };

/** The visit report as an A4 PDF (same access as the report itself). */
export const GET = handle(async (_req, { params }: Ctx) => {
  const actor = await requireApiActor();
  const id = z.uuid({ message: "Not a valid visit id." }).parse((await params).id);
  const { bytes, fileName } = await getServiceVisitReportPdf(getDb(), actor, id);
  return new Response(bytes as Uint8Array<ArrayBuffer>, {
    status: 200,
    headers: {
      "Content-Type": "application/pdf",
      "Content-Length": String(bytes.byteLength),
      "Content-Disposition": `attachment; filename="${fileName}"`,
      "Cache-Control": "private, no-store",
    },
  });
});
