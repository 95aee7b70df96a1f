/**
 * Runs one analysis in a worker thread, so the worker's main thread stays free to
 * write progress to the database and keep its queue connection alive while the
 * CPU-bound fitting runs.
 */
import { parentPort, workerData } from "node:worker_threads";
import { inflateSync } from "node:zlib";
import { TiffInputError, decodeDeflate } from "../lib/tiff";
import {
  AnalysisInputError,
  runMeasurementPipeline,
  type MeasurementParameters,
} from "../lib/psf/run-measurement-pipeline";

interface Input {
  bytes: Uint8Array;
  params: MeasurementParameters;
  maxVoxels: number;
}

const { bytes, params, maxVoxels } = workerData as Input;
let last = 0;

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

runMeasurementPipeline(bytes, params, {
  maxVoxels,
  inflate,
  onProgress(stage, fraction) {
    const now = Date.now();
    if (now - last < 250 && fraction < 1) return;
    last = now;
    parentPort!.postMessage({ type: "progress", stage, fraction });
  },
})
  .then((result) => parentPort!.postMessage({ type: "result", result }))
  .catch((err: unknown) => {
    const inputError =
      err instanceof TiffInputError ||
      err instanceof AnalysisInputError ||
      err instanceof RangeError ||
      err instanceof TypeError;
    parentPort!.postMessage({
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
