/**
 * The worker's side of a measurement: claim it, report progress, and write the
 * results — bead rows and summary — in one transaction. Writing is idempotent:
 * a retried job replaces its own bead rows, never adds to them.
 */
import { and, eq, inArray } from "drizzle-orm";
import { measurementVerdict } from "../../lib/qc";
import { ENGINE_VERSION } from "../../lib/psf";
import type { MeasurementPipelineResult } from "../../lib/psf/run-measurement-pipeline";
import type { Db } from "../db/client";
import { beadResults, measurements, stacks, type Measurement } from "../db/schema";
import type { StoredParameters } from "./measurements";

export async function claimMeasurement(
  db: Db,
  id: string,
): Promise<{ row: Measurement; storageKey: string } | null> {
  const [row] = await db
    .update(measurements)
    .set({
      status: "running",
      stage: "reading",
      fraction: 0,
      startedAt: new Date(),
      errorCode: null,
      errorMessage: null,
    })
    .where(and(eq(measurements.id, id), inArray(measurements.status, ["queued", "running"])))
    .returning();
  if (!row) return null; // cancelled, or already finished by an earlier attempt
  const [stack] = await db.select({ key: stacks.storageKey }).from(stacks).where(eq(stacks.id, row.stackId));
  return { row, storageKey: stack!.key };
}

/** Returns false when the measurement was cancelled meanwhile. */
export async function reportProgress(db: Db, id: string, stage: string, fraction: number): Promise<boolean> {
  const rows = await db
    .update(measurements)
    .set({ stage, fraction: Math.max(0, Math.min(1, fraction)) })
    .where(and(eq(measurements.id, id), eq(measurements.status, "running")))
    .returning({ id: measurements.id });
  return rows.length > 0;
}

export async function failMeasurement(db: Db, id: string, code: string, message: string) {
  await db
    .update(measurements)
    .set({
      status: "failed",
      stage: "failed",
      errorCode: code,
      errorMessage: message,
      finishedAt: new Date(),
    })
    .where(and(eq(measurements.id, id), inArray(measurements.status, ["queued", "running"])));
}

function median(xs: number[]): number | null {
  const v = xs.filter((x) => Number.isFinite(x)).sort((a, b) => a - b);
  if (!v.length) return null;
  const m = v.length >> 1;
  return v.length % 2 ? v[m]! : (v[m - 1]! + v[m]!) / 2;
}

/** Linear interpolation of the prediction's axial width at a depth. */
function predictedAxialAt(pred: MeasurementPipelineResult["prediction"], depthUm: number): number | null {
  if (!pred.length) return null;
  for (let i = 1; i < pred.length; i++) {
    const a = pred[i - 1]!;
    const b = pred[i]!;
    if (depthUm <= b.depthUm) {
      const t = (depthUm - a.depthUm) / (b.depthUm - a.depthUm || 1);
      return a.axialFwhmUm + t * (b.axialFwhmUm - a.axialFwhmUm);
    }
  }
  return pred[pred.length - 1]!.axialFwhmUm;
}

export function buildSummary(result: MeasurementPipelineResult, row: Measurement) {
  const params = row.parameters as StoredParameters;
  const { analysis, theory } = result;
  const s = analysis.summary;
  const pick = (w: typeof s.fwhmX) => w.medianCorrectedUm ?? w.medianUm;
  const lateralUm = median([pick(s.fwhmX) ?? NaN, pick(s.fwhmY) ?? NaN]);
  const axialUm = pick(s.fwhmZ);
  const ratios = {
    lateral: lateralUm != null ? lateralUm / (theory.lateralNm / 1000) : null,
    axial: axialUm != null ? axialUm / (theory.axialNm / 1000) : null,
  };
  const included = analysis.beads.filter((b) => b.included);
  const depths = included.map((b) => b.depthUm);
  const dMin = depths.length ? Math.min(...depths) : 0;
  const dMax = depths.length ? Math.max(...depths) : 0;
  const pa = predictedAxialAt(result.prediction, dMin);
  const pb = predictedAxialAt(result.prediction, dMax);
  const trend = analysis.trend.fwhmZ;
  const verdict = measurementVerdict({
    purpose: row.purpose,
    beadsUsed: s.used,
    ratios,
    limits: params.limits,
    depthSlope:
      dMax - dMin >= 3 && pa != null && pb != null
        ? {
            measured: trend.slope,
            measuredLow: trend.slopeLow,
            measuredHigh: trend.slopeHigh,
            predicted: (pb - pa) / (dMax - dMin),
          }
        : null,
    sampling: {
      verdict: result.sampling.verdict,
      message: result.sampling.message,
      // The fitting rule (≥ 3 px laterally, ≥ 5 planes axially across the FWHM) applies to the
      // PSF actually imaged: a mismatch-broadened axial PSF can be well sampled by a z-step
      // that would be too coarse for the ideal one.
      enoughForFitting:
        (result.sampling.lateral.enoughForFitting || (lateralUm ?? 0) / result.voxelSizeUm.x >= 3) &&
        (result.sampling.axial.enoughForFitting || (axialUm ?? 0) / result.voxelSizeUm.z >= 5),
    },
  });
  const psf = analysis.averagedPsf;
  return {
    engineVersion: ENGINE_VERSION,
    beads: { found: s.found, used: s.used, rejected: s.rejected, rejectedByReason: s.rejectedByReason },
    widths: s,
    theory,
    ratios,
    headline: {
      lateralFwhmUm: lateralUm,
      axialFwhmUm: axialUm,
      basis: "median of 1D Gaussian + offset fits through each bead's centre",
    },
    verdict,
    sampling: result.sampling,
    voxelSizeUm: result.voxelSizeUm,
    voxelSizeSource: result.voxelSizeSource,
    depthModel: result.depthModel,
    sampleRi: params.sampleRi,
    mediumName: params.mediumName,
    prediction: result.prediction,
    depthProfile: analysis.depthProfile,
    trend: analysis.trend,
    field: analysis.field,
    effectiveRi: result.effectiveRi.fit
      ? {
          sampleRi: result.effectiveRi.fit.sampleRi,
          interval95: result.effectiveRi.fit.interval95,
          consistentWithDeclared: result.effectiveRi.consistentWithDeclared,
          message: result.effectiveRi.message,
          converged: result.effectiveRi.fit.converged,
          rows: result.effectiveRi.fit.rows,
          widefieldScale: result.effectiveRi.widefieldScale,
        }
      : { sampleRi: null, reason: result.effectiveRi.reason },
    // Between channels of a multi-channel stack (null for one channel); pairs capped by the pipeline.
    coregistration: result.coregistration ?? null,
    averagedPsf: psf
      ? {
          shape: psf.shape,
          voxelSizeUm: psf.voxelSizeUm,
          beadCount: psf.beadCount,
          fwhmXUm: psf.fwhmXUm,
          fwhmYUm: psf.fwhmYUm,
          fwhmZUm: psf.fwhmZUm,
          fwhmZDirectUm: psf.fwhmZDirectUm,
          axialAsymmetry: psf.axialAsymmetry,
          dataBase64: Buffer.from(psf.data.buffer, psf.data.byteOffset, psf.data.byteLength).toString(
            "base64",
          ),
        }
      : null,
    metadata: {
      format: result.metadata.format,
      warnings: result.metadata.warnings,
      compression: result.metadata.compression,
    },
    provenance: analysis.provenance,
  };
}

/** One transaction: replace this measurement's beads, store the summary, mark it done. */
export async function saveResults(
  db: Db,
  row: Measurement,
  result: MeasurementPipelineResult,
): Promise<boolean> {
  const summary = buildSummary(result, row);
  return db.transaction(async (tx) => {
    const [current] = await tx
      .select({ status: measurements.status })
      .from(measurements)
      .where(eq(measurements.id, row.id))
      .for("update");
    if (current?.status !== "running") return false; // cancelled while we worked
    await tx.delete(beadResults).where(eq(beadResults.measurementId, row.id));
    const beads = result.analysis.beads;
    for (let i = 0; i < beads.length; i += 500) {
      await tx.insert(beadResults).values(
        beads.slice(i, i + 500).map((b) => ({
          measurementId: row.id,
          beadIndex: b.id,
          xPx: b.xPx,
          yPx: b.yPx,
          zPx: b.zPx,
          depthUm: b.depthUm,
          apparentDepthUm: b.apparentDepthUm,
          fwhmXUm: b.fwhmXUm,
          fwhmYUm: b.fwhmYUm,
          fwhmZUm: b.fwhmZUm,
          fwhmZDirectUm: b.fwhmZDirectUm,
          fwhm3dXUm: b.fwhm3dXUm,
          fwhm3dYUm: b.fwhm3dYUm,
          fwhm3dZUm: b.fwhm3dZUm,
          amplitude: b.amplitude,
          background: b.background,
          snr: b.snr,
          r2: b.r2,
          axialAsymmetry: b.axialAsymmetry,
          included: b.included,
          rejectReason: b.rejectReason,
          extra: {
            xUm: b.xUm,
            yUm: b.yUm,
            zUm: b.zUm,
            uncertaintyUm: { x: b.fwhmXUncertaintyUm, y: b.fwhmYUncertaintyUm, z: b.fwhmZUncertaintyUm },
            r2: { x: b.r2X, y: b.r2Y, z: b.r2Z, xyz: b.r23d },
            axialSkewness: b.axialSkewness,
            axialEnergyRatio: b.axialEnergyRatio,
            lateralAsymmetry: b.lateralAsymmetry,
            driftUmPerUm: b.driftUmPerUm,
            peak: b.peak,
            integrated: b.integrated,
            rejectReasons: b.rejectReasons,
          },
        })),
      );
    }
    await tx
      .update(measurements)
      .set({
        status: "done",
        stage: "done",
        fraction: 1,
        summary,
        engineVersion: ENGINE_VERSION,
        formulaId: `${result.theory.formulaId}@${result.theory.formulaVersion}`,
        finishedAt: new Date(),
      })
      .where(eq(measurements.id, row.id));
    return true;
  });
}
