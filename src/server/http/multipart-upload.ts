/**
 * Stream a multipart/form-data body with one `file` part (and an optional JSON
 * `meta` field) to a temporary file, enforcing the size limit as bytes arrive.
 * The caller owns the temporary file and must remove it.
 */
import "server-only";
import { randomUUID } from "node:crypto";
import { createWriteStream } from "node:fs";
import { mkdir, rm } from "node:fs/promises";
import path from "node:path";
import { Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import type { ReadableStream as NodeWebStream } from "node:stream/web";
import busboy from "busboy";
import { AppError } from "./errors";

export interface ReceivedFile {
  filePath: string;
  fileName: string;
  bytes: number;
  fields: Record<string, string>;
}

export async function receiveMultipartFile(
  req: Request,
  opts: { dir: string; maxBytes: number },
): Promise<ReceivedFile> {
  const type = req.headers.get("content-type") ?? "";
  if (!type.toLowerCase().startsWith("multipart/form-data")) {
    throw new AppError("unsupported_media_type", "Send the stack as multipart/form-data with a 'file' part.");
  }
  const declared = Number(req.headers.get("content-length") ?? "NaN");
  if (Number.isFinite(declared) && declared > opts.maxBytes + 1024 * 1024) {
    throw new AppError("too_large", `The upload is ${declared} bytes; the limit is ${opts.maxBytes} bytes.`);
  }
  if (!req.body) throw new AppError("bad_request", "The request has no body.");
  await mkdir(opts.dir, { recursive: true });
  const filePath = path.join(opts.dir, `direct-${randomUUID()}.part`);

  let bb: busboy.Busboy;
  try {
    bb = busboy({
      headers: { "content-type": type },
      // Browsers and fetch send a non-ASCII file name as raw UTF-8 (WHATWG multipart/form-data
      // encoding); busboy's default would read those bytes as Latin-1.
      defParamCharset: "utf8",
      limits: { files: 1, fields: 5, fieldSize: 64 * 1024, fileSize: opts.maxBytes },
    });
  } catch {
    throw new AppError("bad_request", "The multipart body is malformed (missing boundary?).");
  }
  const fields: Record<string, string> = {};
  let fileName: string | null = null;
  let bytes = 0;
  let truncated = false;
  let fileDone: Promise<void> | null = null;

  bb.on("field", (name, value) => {
    fields[name] = value;
  });
  bb.on("file", (name, stream, info) => {
    if (name !== "file" || fileName !== null) {
      stream.resume();
      return;
    }
    fileName = path.basename(info.filename || "stack.tif");
    stream.on("data", (chunk: Buffer) => {
      bytes += chunk.length;
    });
    stream.on("limit", () => {
      truncated = true;
    });
    fileDone = pipeline(stream, createWriteStream(filePath));
  });

  try {
    await pipeline(Readable.fromWeb(req.body as unknown as NodeWebStream), bb);
    if (fileDone) await fileDone;
  } catch (err) {
    await rm(filePath, { force: true });
    if (err instanceof AppError) throw err;
    const code = (err as { code?: string }).code;
    if (code === "ENOSPC" || code === "EDQUOT") {
      throw new AppError(
        "unavailable",
        "The server's upload space is full. Ask an administrator to free space, then upload again.",
        {
          cause: err,
        },
      );
    }
    throw new AppError("bad_request", "The upload was interrupted or the multipart body is malformed.", {
      cause: err,
    });
  }
  if (truncated) {
    await rm(filePath, { force: true });
    throw new AppError("too_large", `The file is larger than the limit of ${opts.maxBytes} bytes.`);
  }
  if (fileName === null) {
    await rm(filePath, { force: true });
    throw new AppError("bad_request", "The form has no 'file' part.");
  }
  return { filePath, fileName, bytes, fields };
}
