"use client";
/**
 * Resumable upload of one file over tus: chunked, retried after dropped
 * connections, and resumable after a page reload (tus-js-client remembers the
 * upload URL per file fingerprint in localStorage). Reports bytes, speed and time left.
 */
import { useCallback, useRef, useState } from "react";
import { Upload, type DetailedError } from "tus-js-client";
import type { StackDto } from "@/contracts/stacks";

export type UploadState =
  | { phase: "idle" }
  | {
      phase: "uploading" | "paused";
      sent: number;
      total: number;
      bytesPerSecond: number | null;
      secondsLeft: number | null;
      resumed: boolean;
    }
  | { phase: "verifying"; total: number }
  | { phase: "done"; stack: StackDto }
  | { phase: "error"; message: string };

const CHUNK_BYTES = 8 * 1024 * 1024;

function errorMessage(err: Error | DetailedError): string {
  const body = "originalResponse" in err ? err.originalResponse?.getBody() : undefined;
  if (body) {
    try {
      const parsed = JSON.parse(body) as { error?: { message?: string } };
      if (parsed.error?.message) return parsed.error.message;
    } catch {
      /* not JSON: fall through */
    }
  }
  if ("originalResponse" in err && err.originalResponse?.getStatus() === 413)
    return "The file is larger than the upload limit.";
  return "The upload failed. Check the connection; starting it again resumes where it stopped.";
}

export function useResumableUpload() {
  const [state, setState] = useState<UploadState>({ phase: "idle" });
  const uploadRef = useRef<Upload | null>(null);
  const samples = useRef<Array<{ t: number; bytes: number }>>([]);

  const start = useCallback(async (file: File) => {
    samples.current = [];
    let resumed = false;
    const upload = new Upload(file, {
      endpoint: "/api/v1/uploads",
      chunkSize: CHUNK_BYTES,
      retryDelays: [0, 1000, 3000, 5000, 10000],
      metadata: { filename: file.name, filetype: file.type || "image/tiff" },
      storeFingerprintForResuming: true,
      removeFingerprintOnSuccess: true,
      onProgress(sent, total) {
        const now = performance.now();
        samples.current.push({ t: now, bytes: sent });
        // Speed over the last ~5 s, so the estimate follows the connection.
        while (samples.current.length > 2 && now - samples.current[0]!.t > 5000) samples.current.shift();
        const first = samples.current[0]!;
        const dt = (now - first.t) / 1000;
        const rate = dt > 0.3 ? (sent - first.bytes) / dt : null;
        setState({
          phase: sent >= total ? "verifying" : "uploading",
          sent,
          total,
          bytesPerSecond: rate,
          secondsLeft: rate && rate > 0 ? (total - sent) / rate : null,
          resumed,
        } as UploadState);
      },
      onSuccess(payload) {
        try {
          const stack = JSON.parse(payload.lastResponse.getBody()) as StackDto;
          if (!stack.id) throw new Error("no id");
          setState({ phase: "done", stack });
        } catch {
          setState({
            phase: "error",
            message: "The upload finished but the stack was not registered. Upload it again.",
          });
        }
      },
      onError(err) {
        setState({ phase: "error", message: errorMessage(err) });
      },
    });
    uploadRef.current = upload;
    const previous = await upload.findPreviousUploads();
    if (previous.length > 0) {
      resumed = true;
      upload.resumeFromPreviousUpload(previous[0]!);
    }
    setState({
      phase: "uploading",
      sent: 0,
      total: file.size,
      bytesPerSecond: null,
      secondsLeft: null,
      resumed,
    });
    upload.start();
  }, []);

  const pause = useCallback(() => {
    void uploadRef.current?.abort(false);
    setState((s) => (s.phase === "uploading" ? { ...s, phase: "paused" } : s));
  }, []);

  const resume = useCallback(() => {
    uploadRef.current?.start();
    setState((s) => (s.phase === "paused" ? { ...s, phase: "uploading" } : s));
  }, []);

  const cancel = useCallback(() => {
    // Terminate: the server deletes the partial file.
    void uploadRef.current?.abort(true);
    uploadRef.current = null;
    setState({ phase: "idle" });
  }, []);

  return { state, start, pause, resume, cancel };
}
