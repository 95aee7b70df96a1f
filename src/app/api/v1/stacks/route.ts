import { rm } from "node:fs/promises";
import { stackUploadMetaSchema } from "@/contracts/stacks";
import { getEnv } from "@/env";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { AppError } from "@/server/http/errors";
import { handle, json } from "@/server/http/handler";
import { receiveMultipartFile } from "@/server/http/multipart-upload";
import { listStacks, registerStackFromFile } from "@/server/services/stacks";
import { getStorage, uploadsDir } from "@/server/storage/get-storage";

export const runtime = "nodejs";

/** Single-request upload for scripts: multipart `file` (TIFF) + optional JSON `meta`. */
export const POST = handle(async (req) => {
  const actor = await requireApiActor();
  const received = await receiveMultipartFile(req, {
    dir: uploadsDir(),
    maxBytes: getEnv().MAX_UPLOAD_BYTES,
  });
  try {
    let meta;
    if (received.fields.meta) {
      let raw: unknown;
      try {
        raw = JSON.parse(received.fields.meta);
      } catch {
        throw new AppError("invalid_json", "The 'meta' field is not valid JSON.");
      }
      meta = stackUploadMetaSchema.parse(raw);
    }
    const stack = await registerStackFromFile(getDb(), getStorage(), actor, {
      filePath: received.filePath,
      fileName: received.fileName,
      meta,
    });
    return json(stack, stack.duplicate ? 200 : 201);
  } finally {
    await rm(received.filePath, { force: true });
  }
});

export const GET = handle(async () => {
  const actor = await requireApiActor();
  return json({ stacks: await listStacks(getDb(), actor) });
});
