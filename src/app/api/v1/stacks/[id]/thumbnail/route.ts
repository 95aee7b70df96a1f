import { z } from "zod";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle } from "@/server/http/handler";
import {
  getStackThumbnailPng,
  THUMBNAIL_MAX_SIDE_PX,
  THUMBNAIL_MIN_SIDE_PX,
} from "@/server/services/stack-thumbnails";
import { getStorage } from "@/server/storage/get-storage";

export const runtime = "nodejs";

type Ctx = { params: Promise<{ id: string }> };
const idSchema = z.uuid({ message: "Not a valid stack id." });
const querySchema = z.object({
  channel: z.coerce.number().int().min(0).max(1023).default(0),
  size: z.coerce.number().int().min(THUMBNAIL_MIN_SIDE_PX).max(THUMBNAIL_MAX_SIDE_PX).default(256),
});

/** The maximum-intensity projection of one channel as a grey PNG (`?channel=0&size=256`). */
export const GET = handle(async (req, { params }: Ctx) => {
  const actor = await requireApiActor();
  const id = idSchema.parse((await params).id);
  const search = new URL(req.url).searchParams;
  const query = querySchema.parse({
    channel: search.get("channel") ?? undefined,
    size: search.get("size") ?? undefined,
  });
  const png = await getStackThumbnailPng(getDb(), getStorage(), actor, id, {
    channel: query.channel,
    maxSidePx: query.size,
  });
  return new Response(png as Uint8Array<ArrayBuffer>, {
    status: 200,
    headers: {
      "Content-Type": "image/png",
      "Content-Length": String(png.byteLength),
      // Private: the image is facility data behind a session; an hour is long enough to page around.
      "Cache-Control": "private, max-age=3600",
    },
  });
});
