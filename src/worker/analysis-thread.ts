/**
 * Runs analyses in a worker thread, so the worker's main thread stays free to
 * write progress to the database and keep its queue connection alive while the
 * CPU-bound fitting runs.
 */
import { parentPort } from "node:worker_threads";
import { inflateSync } from "node:zlib";
import { TiffInputError, decodeDeflate } from "../lib/tiff";
import {
  AnalysisInputError,
  runMeasurementPipeline,
  type MeasurementParameters,
} from "../lib/psf/run-measurement-pipeline";

/** One job from the worker's main thread; `id` ties the answers to it. */
interface Job {
  id: number;
  bytes: Uint8Array;
  params: MeasurementParameters;
  maxVoxels: number;
}

/** Node's native zlib for Deflate strips: about twice the pure-JS decoder's speed. */
function inflate(compressed: Uint8Array, out: Uint8Array): number {
  let result: Buffer;
  try {
    result = inflateSync(compressed);
  } catch {
    return decodeDeflate(compressed, out); // raw deflate or corrupt data: the pure decoder says which
  }
  const n = Math.min(result.length, out.length);
  out.set(result.subarray(0, n));
  return n;
}

// The thread stays up between jobs (the main thread sends one at a time), so each analysis
// does not pay for starting a thread and loading the engine again.
parentPort!.on("message", (job: Job) => {
  const { id, bytes, params, maxVoxels } = job;
  let last = 0;
  runMeasurementPipeline(bytes, params, {
    maxVoxels,
    inflate,
    onProgress(stage, fraction) {
      const now = Date.now();
      if (now - last < 250 && fraction < 1) return;
      last = now;
      parentPort!.postMessage({ id, type: "progress", stage, fraction });
    },
  })
    .then((result) => parentPort!.postMessage({ id, type: "result", result }))
    .catch((err: unknown) => {
      const inputError =
        err instanceof TiffInputError ||
        err instanceof AnalysisInputError ||
        err instanceof RangeError ||
        err instanceof TypeError;
      parentPort!.postMessage({
        id,
        type: "error",
        inputError,
        code:
          err instanceof TiffInputError || err instanceof AnalysisInputError
            ? err.code
            : inputError
              ? "bad_input"
              : "crash",
        message: err instanceof Error ? err.message : String(err),
      });
    });
});
