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

/**
 * Stacks up to this size leave the analysis thread running for the next job: starting a
 * thread and loading the engine costs about a second, most of a small analysis. After a
 * bigger stack the thread ends, so its heap goes back to the system instead of staying
 * at the size of that stack.
 */
const KEEP_THREAD_MAX_BYTES = 64 * 1024 * 1024;

let idleThread: Worker | null = null;
let nextJobId = 1;

/** Threads started, and threads stopped because their measurement was cancelled (for tests and logs). */
export const analysisThreads = { started: 0, stoppedByCancel: 0 };

/** The measurement was cancelled while its analysis ran; the thread was stopped. */
class Cancelled extends Error {}

function takeThread(): Worker {
  // workerData must be an object even though jobs arrive as messages: loader hooks that a
  // test runner passes on to threads read it.
  let thread = idleThread;
  if (!thread) {
    thread = new Worker(new URL("../analysis-thread-entry.mjs", import.meta.url), { workerData: {} });
    analysisThreads.started++;
  }
  idleThread = null;
  thread.ref();
  return thread;
}

function runInThread(
  bytes: Uint8Array,
  params: StoredParameters,
  onProgress: (stage: string, fraction: number) => void,
  signal: AbortSignal,
): Promise<MeasurementPipelineResult> {
  const keep = bytes.byteLength <= KEEP_THREAD_MAX_BYTES;
  const thread = takeThread();
  const id = nextJobId++;
  return new Promise<MeasurementPipelineResult>((resolve, reject) => {
    const done = (reusable: boolean) => {
      signal.removeEventListener("abort", onAbort);
      thread.off("message", onMessage);
      thread.off("error", onError);
      thread.off("exit", onExit);
      if (reusable && keep && !idleThread) {
        thread.unref(); // an idle thread must not keep the worker process alive
        idleThread = thread;
      } else if (reusable) {
        void thread.terminate();
      }
    };
    const onMessage = (msg: { id: number; type: string } & Record<string, unknown>) => {
      if (msg.id !== id) return;
      if (msg.type === "progress") onProgress(msg.stage as string, msg.fraction as number);
      else if (msg.type === "result") {
        done(true);
        resolve(msg.result as MeasurementPipelineResult);
      } else if (msg.type === "error") {
        done(true);
        reject(
          msg.inputError
            ? new InputFailure(msg.code as string, msg.message as string)
            : new Error(msg.message as string),
        );
      }
    };
    const onError = (err: Error) => {
      done(false);
      void thread.terminate();
      reject(err);
    };
    const onExit = (code: number) => {
      done(false);
      reject(new Error(`analysis thread exited with code ${code}`));
    };
    // Cancelled mid-analysis: stop the thread rather than finish work nobody will see.
    const onAbort = () => {
      analysisThreads.stoppedByCancel++;
      done(false);
      void thread.terminate();
      reject(new Cancelled());
    };
    signal.addEventListener("abort", onAbort, { once: true });
    thread.on("message", onMessage);
    thread.on("error", onError);
    thread.on("exit", onExit);
    thread.postMessage({ id, bytes, params, maxVoxels: getEnv().MAX_STACK_VOXELS }, [
      bytes.buffer as ArrayBuffer,
    ]);
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
    const cancelled = new AbortController();
    const result = await runInThread(
      own,
      row.parameters as StoredParameters,
      (stage, fraction) => {
        // false: the row is no longer running (someone cancelled it).
        void reportProgress(db, row.id, STAGE_OF[stage] ?? stage, fraction)
          .then((running) => {
            if (!running) cancelled.abort();
          })
          .catch(() => {});
      },
      cancelled.signal,
    );
    await reportProgress(db, row.id, "saving", 0);
    saved = await saveResults(db, row, result);
  } catch (err) {
    if (err instanceof Cancelled) return; // the row already says cancelled
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
