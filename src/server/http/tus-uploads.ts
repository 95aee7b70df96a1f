/**
 * Resumable browser uploads over the tus protocol (tus.io, v1.0.0): the browser
 * sends the file in chunks, can resume after a dropped connection or a page
 * reload, and the finished file is registered as a stack in the same request that
 * completes it. Each upload is tied to the user and facility that created it.
 */
import "server-only";
import { rm } from "node:fs/promises";
import path from "node:path";
import { FileStore } from "@tus/file-store";
import { Server, type Upload } from "@tus/server";
import { getEnv } from "../../env";
import { getDb } from "../db/client";
import { requireApiActor } from "../auth/current-actor";
import { registerStackFromFile, requireUploadRight } from "../services/stacks";
import { getStorage, uploadsDir } from "../storage/get-storage";
import { AppError, unstorableTextError } from "./errors";
import { cutText } from "../../lib/text/cut-text";

export const TUS_PATH = "/api/v1/uploads";
const ABANDONED_AFTER_MS = 24 * 3600 * 1000;

function tusError(thrown: unknown): { status_code: number; body: string } {
  const err = unstorableTextError(thrown) ?? thrown;
  if (err instanceof AppError) {
    return {
      status_code: err.status,
      body: JSON.stringify({ error: { code: err.code, message: err.message } }),
    };
  }
  console.error("[uploads] unexpected error:", err instanceof Error ? err.message : err);
  return {
    status_code: 500,
    body: JSON.stringify({ error: { code: "internal", message: "The upload could not be stored." } }),
  };
}

let server: Server | undefined;
let store: FileStore | undefined;

export function getUploadStore(): FileStore {
  store ??= new FileStore({
    directory: path.join(uploadsDir(), "tus"),
    expirationPeriodInMilliseconds: ABANDONED_AFTER_MS,
  });
  return store;
}

export function getTusServer(): Server {
  if (server) return server;
  const datastore = getUploadStore();
  server = new Server({
    path: TUS_PATH,
    datastore,
    maxSize: getEnv().MAX_UPLOAD_BYTES,
    respectForwardedHeaders: false,
    async onUploadCreate(_req, upload: Upload) {
      try {
        const actor = await requireApiActor();
        await requireUploadRight(getDb(), actor);
        const name = cutText(String(upload.metadata?.filename ?? "stack.tif"), 255);
        // Ownership comes from the session, never from what the client sent.
        return { metadata: { filename: name, userId: actor.userId, facilityId: actor.facilityId } };
      } catch (err) {
        throw tusError(err);
      }
    },
    async onIncomingRequest(req, uploadId) {
      if (req.method === "POST" || req.method === "OPTIONS") return;
      try {
        const actor = await requireApiActor();
        const upload = await datastore.getUpload(uploadId).catch(() => null);
        if (
          !upload ||
          upload.metadata?.userId !== actor.userId ||
          upload.metadata?.facilityId !== actor.facilityId
        ) {
          throw new AppError("not_found", "Upload not found.");
        }
      } catch (err) {
        throw tusError(err);
      }
    },
    async onUploadFinish(_req, upload: Upload) {
      const filePath = path.join(datastore.directory, upload.id);
      try {
        const actor = await requireApiActor();
        const stack = await registerStackFromFile(getDb(), getStorage(), actor, {
          filePath,
          fileName: String(upload.metadata?.filename ?? "stack.tif"),
        });
        return {
          status_code: 200,
          headers: { "Content-Type": "application/json" },
          body: JSON.stringify(stack),
        };
      } catch (err) {
        throw tusError(err);
      } finally {
        // The bytes are now in object storage (or refused): drop the scratch copy.
        await datastore.remove(upload.id).catch(() => rm(filePath, { force: true }));
      }
    },
  });
  return server;
}
