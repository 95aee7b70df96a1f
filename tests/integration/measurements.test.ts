import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { closeDb, getDb } from "@/server/db/client";
import { beadResults, measurements } from "@/server/db/schema";
import { stopBoss } from "@/server/queue/boss";
import { getStorage } from "@/server/storage/get-storage";
import { registerStackFromFile } from "@/server/services/stacks";
import {
  cancelMeasurement,
  createMeasurement,
  getMeasurement,
  rerunMeasurement,
} from "@/server/services/measurements";
import { analysisThreads, analyzeMeasurement } from "@/worker/handlers/analyze-measurement";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";
import { makeFacility, outcome, type TestFacility } from "./helpers";

let f: TestFacility;
let dir: string;
let stackId: string;
const base = {
  purpose: "routine" as const,
  channel: 0,
  emissionWavelengthNm: 520,
  beadDiameterNm: 100,
  modality: "widefield" as const,
};

beforeAll(async () => {
  f = await makeFacility("meas");
  dir = mkdtempSync(path.join(tmpdir(), "bb-meas-"));
  const demo = makeDemoBeadStack({
    na: 1.4,
    immersionRi: 1.518,
    sampleRi: 1.518,
    emissionWavelengthNm: 520,
    beadCount: 8,
    shape: [48, 128, 128],
    seed: 5,
  });
  const file = path.join(dir, "beads.tif");
  writeFileSync(file, demo.tiff);
  stackId = (
    await registerStackFromFile(getDb(), getStorage(), f.actors.staff, {
      filePath: file,
      fileName: "beads.tif",
    })
  ).id;
});
afterAll(async () => {
  await stopBoss();
  rmSync(dir, { recursive: true, force: true });
  await closeDb();
});

const attempt = { retryCount: 0, retryLimit: 3 };

describe("a measurement from queue to result", () => {
  it("analyses the stack in the worker thread and stores beads and summary once, even when the job runs twice", async () => {
    const { id, status } = await createMeasurement(getDb(), f.actors.staff, {
      ...base,
      stackId,
      objectiveId: f.objectiveIds[0],
    });
    expect(status).toBe("queued");
    await analyzeMeasurement({ measurementId: id }, attempt);
    const m = await getMeasurement(getDb(), f.actors.staff, id);
    expect(m.status).toBe("done");
    const summary = m.summary as {
      beads: { used: number };
      ratios: { lateral: number; axial: number };
      theory: { lateralNm: number };
    };
    expect(summary.beads.used).toBeGreaterThanOrEqual(6);
    // Source: METHODS.md §2.1 — widefield lateral FWHM 0.5145 λ/NA = 191.1 nm at 520 nm, NA 1.4 (computed there)
    expect(summary.theory.lateralNm).toBeCloseTo(191.1, 0);
    // The demo PSF is the model broadened by 15 %; a Gaussian fit reads an Airy core a few % narrow (METHODS.md §8).
    expect(summary.ratios.lateral).toBeGreaterThan(1.0);
    expect(summary.ratios.lateral).toBeLessThan(1.25);
    const count = async () =>
      (await getDb().select().from(beadResults).where(eq(beadResults.measurementId, id))).length;
    const n = await count();
    expect(n).toBeGreaterThanOrEqual(6);

    // A retried job (e.g. after a crash past the write) must not duplicate rows.
    await getDb().update(measurements).set({ status: "running" }).where(eq(measurements.id, id));
    await analyzeMeasurement({ measurementId: id }, attempt);
    expect(await count()).toBe(n);
  });

  it("fails bad input with the reason and does not throw (no retry)", async () => {
    const { id } = await createMeasurement(getDb(), f.actors.staff, {
      ...base,
      stackId,
      objectiveId: f.objectiveIds[0],
      // 1 µm pixels: no bead has 3 pixels across its FWHM; the analysis still runs but finds no usable bead
      voxelSizeUm: { x: 1, y: 1, z: 5 },
    });
    await expect(analyzeMeasurement({ measurementId: id }, attempt)).resolves.toBeUndefined();
    const m = await getMeasurement(getDb(), f.actors.staff, id);
    expect(["done", "failed"]).toContain(m.status);
    if (m.status === "done")
      expect(["insufficient", "check"]).toContain(
        (m.summary as { verdict: { level: string } }).verdict.level,
      );
  });

  it("does nothing for a cancelled measurement", async () => {
    const { id } = await createMeasurement(getDb(), f.actors.admin, {
      ...base,
      stackId,
      objectiveId: f.objectiveIds[0],
    });
    await cancelMeasurement(getDb(), f.actors.admin, id);
    await analyzeMeasurement({ measurementId: id }, attempt);
    const m = await getMeasurement(getDb(), f.actors.admin, id);
    expect(m.status).toBe("cancelled");
    expect((await getDb().select().from(beadResults).where(eq(beadResults.measurementId, id))).length).toBe(
      0,
    );
  });

  it("stops the analysis thread when the measurement is cancelled mid-run, and the next job still runs", async () => {
    // A stack large enough that the analysis reports progress several times (every 250 ms).
    const big = makeDemoBeadStack({
      na: 1.4,
      immersionRi: 1.518,
      sampleRi: 1.518,
      emissionWavelengthNm: 520,
      beadCount: 40,
      shape: [160, 256, 256],
      seed: 6,
    });
    const file = path.join(dir, "big.tif");
    writeFileSync(file, big.tiff);
    const bigStack = await registerStackFromFile(getDb(), getStorage(), f.actors.staff, {
      filePath: file,
      fileName: "big.tif",
    });
    const { id } = await createMeasurement(getDb(), f.actors.staff, {
      ...base,
      stackId: bigStack.id,
      objectiveId: f.objectiveIds[0],
    });
    const stopped = analysisThreads.stoppedByCancel;
    const job = analyzeMeasurement({ measurementId: id }, attempt);
    // Cancel as soon as the analysis is past reading (the thread is busy fitting).
    for (let i = 0; i < 600; i++) {
      const [row] = await getDb().select().from(measurements).where(eq(measurements.id, id));
      if (row!.status === "running" && row!.stage !== "queued" && row!.stage !== "reading") break;
      await new Promise((r) => setTimeout(r, 20));
    }
    await cancelMeasurement(getDb(), f.actors.staff, id);
    await job;
    expect(analysisThreads.stoppedByCancel).toBe(stopped + 1);
    const m = await getMeasurement(getDb(), f.actors.staff, id);
    expect(m.status).toBe("cancelled");
    expect(m.summary).toBeNull();
    expect((await getDb().select().from(beadResults).where(eq(beadResults.measurementId, id))).length).toBe(
      0,
    );
    // A new thread takes the next job.
    const next = await createMeasurement(getDb(), f.actors.staff, {
      ...base,
      stackId,
      objectiveId: f.objectiveIds[0],
    });
    await analyzeMeasurement({ measurementId: next.id }, attempt);
    expect((await getMeasurement(getDb(), f.actors.staff, next.id)).status).toBe("done");
  });

  it("re-runs with changed parameters as a new version and keeps the old one", async () => {
    const { id } = await createMeasurement(getDb(), f.actors.staff, {
      ...base,
      stackId,
      objectiveId: f.objectiveIds[0],
    });
    await analyzeMeasurement({ measurementId: id }, attempt);
    const re = await rerunMeasurement(getDb(), f.actors.staff, id, {
      excludedBeadIds: [0, 1],
      thresholdK: 8,
    });
    expect(re.version).toBe(2);
    await analyzeMeasurement({ measurementId: re.id }, attempt);
    const v1 = await getMeasurement(getDb(), f.actors.staff, id);
    const v2 = await getMeasurement(getDb(), f.actors.staff, re.id);
    expect(v1.status).toBe("done");
    expect(v2.status).toBe("done");
    expect(v2.parentId).toBe(id);
    expect(v2.parameters.excludedBeadIds).toEqual([0, 1]);
  });
});

describe("who may start which measurement", () => {
  it("a researcher cannot run a routine check, nor see someone else's stack", async () => {
    expect(
      await outcome(() =>
        createMeasurement(getDb(), f.actors.researcher, { ...base, stackId, objectiveId: f.objectiveIds[0] }),
      ),
    ).toBe("forbidden");
    // Another user's stack is invisible to a researcher: not found, not forbidden (ids never leak).
    expect(
      await outcome(() =>
        createMeasurement(getDb(), f.actors.researcher, {
          ...base,
          purpose: "sample",
          sampleRi: 1.38,
          stackId,
          objectiveId: f.objectiveIds[0],
        }),
      ),
    ).toBe("not_found");
  });

  it("an engineer runs service measurements on their own stacks, only on the visit's instrument", async () => {
    // The engineer brings their own as-found stack; staff's stack is not visible to them.
    const file = path.join(dir, "engineer.tif");
    writeFileSync(
      file,
      makeDemoBeadStack({
        na: 1.4,
        immersionRi: 1.518,
        sampleRi: 1.518,
        emissionWavelengthNm: 520,
        beadCount: 4,
        seed: 9,
      }).tiff,
    );
    const own = (
      await registerStackFromFile(getDb(), getStorage(), f.actors.engineer, {
        filePath: file,
        fileName: "e.tif",
      })
    ).id;
    const asEngineer = (stack: string, objectiveId: string) =>
      outcome(() =>
        createMeasurement(getDb(), f.actors.engineer, {
          ...base,
          purpose: "pre-service",
          stackId: stack,
          objectiveId,
        }),
      );
    expect(await asEngineer(stackId, f.objectiveIds[0])).toBe("not_found");
    expect(await asEngineer(own, f.objectiveIds[1])).toBe("not_found");
    expect(await asEngineer(own, f.objectiveIds[0])).toBe("ok");
  });

  it("an unknown medium is a 422 with a pointer to the media list", async () => {
    const r = await outcome(() =>
      createMeasurement(getDb(), f.actors.staff, {
        ...base,
        mediumId: "unobtainium",
        stackId,
        objectiveId: f.objectiveIds[0],
      }),
    );
    expect(r).toBe("unprocessable");
  });
});
