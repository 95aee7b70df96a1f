/**
 * Queue handler: analyse one measurement. Bad input (an unreadable stack, missing
 * voxel size, impossible parameters) fails the measurement with the reason and is
 * not retried; a crash is thrown so the queue retries it with backoff.
 */
import { Worker } from "node:worker_threads";
import { z } from "zod";
import { getEnv } from "../../env";
import { getDb } from "../../server/db/client";
import { getStorage } from "../../server/storage/get-storage";
import {
  claimMeasurement,
  failMeasurement,
  reportProgress,
  saveResults,
} from "../../server/services/analysis-runs";
import type { StoredParameters } from "../../server/services/measurements";
import { sendOutOfSpecAlert } from "../../server/services/alerts";
import type { MeasurementPipelineResult } from "../../lib/psf/run-measurement-pipeline";

export const analyzeJobSchema = z.object({ measurementId: z.uuid() });

const STAGE_OF: Record<string, string> = {
  reading: "reading",
  detecting: "detecting",
  fitting: "fitting",
  aggregating: "fitting",
  modelling: "modelling",
};

class InputFailure extends Error {
  constructor(
    readonly code: string,
    message: string,
  ) {
    super(message);
  }
}

function runInThread(
  bytes: Uint8Array,
  params: StoredParameters,
  onProgress: (stage: string, fraction: number) => void,
): Promise<MeasurementPipelineResult> {
  return new Promise((resolve, reject) => {
    const worker = new Worker(new URL("../analysis-thread-entry.mjs", import.meta.url), {
      workerData: { bytes, params, maxVoxels: getEnv().MAX_STACK_VOXELS },
      transferList: [bytes.buffer as ArrayBuffer],
    });
    let settled = false;
    worker.on("message", (msg) => {
      if (msg.type === "progress") onProgress(msg.stage, msg.fraction);
      else if (msg.type === "result") {
        settled = true;
        resolve(msg.result);
      } else if (msg.type === "error") {
        settled = true;
        reject(msg.inputError ? new InputFailure(msg.code, msg.message) : new Error(msg.message));
      }
    });
    worker.on("error", (err) => {
      if (!settled) reject(err);
    });
    worker.on("exit", (code) => {
      if (!settled) reject(new Error(`analysis thread exited with code ${code}`));
    });
  });
}

export async function analyzeMeasurement(data: unknown, attempt: { retryCount: number; retryLimit: number }) {
  const { measurementId } = analyzeJobSchema.parse(data);
  const db = getDb();
  const claimed = await claimMeasurement(db, measurementId);
  if (!claimed) return; // cancelled or already done: nothing to do
  const { row, storageKey } = claimed;
  let saved: boolean;
  try {
    const bytes = await getStorage().getBytes(storageKey);
    // Transfer the bytes to the thread without a copy when they own their whole buffer
    // (a large file read is); copy only a view into a shared or pooled buffer.
    const ownsBuffer =
      bytes.byteOffset === 0 &&
      bytes.byteLength === bytes.buffer.byteLength &&
      bytes.buffer instanceof ArrayBuffer;
    const own = ownsBuffer ? bytes : bytes.slice();
    const result = await runInThread(own, row.parameters as StoredParameters, (stage, fraction) => {
      void reportProgress(db, row.id, STAGE_OF[stage] ?? stage, fraction).catch(() => {});
    });
    await reportProgress(db, row.id, "saving", 0);
    saved = await saveResults(db, row, result);
  } catch (err) {
    if (err instanceof InputFailure) {
      await failMeasurement(db, row.id, err.code, err.message);
      return; // bad input: do not retry
    }
    console.error(
      `[worker] measurement ${row.id} attempt ${attempt.retryCount + 1} crashed:`,
      err instanceof Error ? err.message : err,
    );
    if (attempt.retryCount >= attempt.retryLimit) {
      await failMeasurement(
        db,
        row.id,
        "analysis_crashed",
        "The analysis stopped unexpectedly several times. The stack may be unusual; the team has the logs.",
      );
    } else {
      // Back to queued so the page says it will be retried.
      await reportProgress(db, row.id, "retrying", 0).catch(() => {});
    }
    throw err;
  }
  if (saved) await alertIfOutOfSpec(row.id);
}

/** Mail admins and staff about a failing check; a mail problem is logged, never fails the analysis. */
async function alertIfOutOfSpec(measurementId: string): Promise<void> {
  try {
    await sendOutOfSpecAlert(getDb(), measurementId);
  } catch (err) {
    console.error(
      `[worker] out-of-spec alert for measurement ${measurementId} could not be sent:`,
      err instanceof Error ? err.message : "unknown error",
    );
  }
}
