/**
 * The whole analysis of one stack, composed from lib/tiff, lib/psf and lib/optics:
 * read the channel, work out the theoretical widths for the lens/medium pair,
 * convert nominal focus travel to actual depth with the RI-mismatch model, measure
 * every bead, and predict the depth profile the model expects. Pure: bytes and
 * plain parameters in, a plain serialisable result out.
 */
import {
  checkSampling,
  fitEffectiveSampleRi,
  judgeDeclaredRi,
  widefieldFwhm,
  type EffectiveSampleRiFit,
  makeNominalToActualDepth,
  predictDepthCurve,
  theoreticalFwhm,
  type Modality,
  type SamplingCheck,
  type TheoreticalFwhm,
} from "../optics";
import { readTiffStack, type TiffMetadata } from "../tiff";
import { analyzeStack } from "./analyze-stack";
import type { AnalysisStage, AnalyzeStackResult } from "./analysis-types";

export interface MeasurementParameters {
  channel: number;
  modality: Modality;
  na: number;
  /** The objective's design immersion RI. */
  immersionRi: number;
  /** RI of the medium around the beads (declared by the user or from the medium library). */
  sampleRi: number;
  emissionWavelengthNm: number;
  excitationWavelengthNm?: number;
  pinholeAu?: number;
  beadDiameterNm?: number;
  /** Overrides the file's voxel size (µm). */
  voxelSizeUm?: { x: number; y: number; z: number };
  coverslipSlice?: number;
  designCoverslipUm?: number;
  thresholdK?: number;
  /** Bead ids the user excluded (re-runs). */
  excludedBeadIds?: number[];
}

export interface PredictedDepthRow {
  depthUm: number;
  /** Predicted lateral and axial FWHM for this modality at this depth, µm. */
  lateralFwhmUm: number;
  axialFwhmUm: number;
  peakRelative: number;
  focalShiftFactor: number;
}

export interface MeasurementPipelineResult {
  analysis: AnalyzeStackResult;
  metadata: TiffMetadata;
  voxelSizeUm: { x: number; y: number; z: number };
  voxelSizeSource: "file" | "user";
  theory: TheoreticalFwhm;
  sampling: SamplingCheck;
  depthModel: { model: string; mismatch: boolean; converged: boolean };
  prediction: PredictedDepthRow[];
  /** The sample RI that best explains the measured axial widths against depth, or why none was fitted. */
  effectiveRi:
    | { fit: EffectiveSampleRiFit; consistentWithDeclared: boolean; message: string; widefieldScale: number }
    | { fit: null; reason: string };
}

export class AnalysisInputError extends Error {
  constructor(
    readonly code: string,
    message: string,
  ) {
    super(message);
    this.name = "AnalysisInputError";
  }
}

/** Matched-RI pairs differ by less than this; no depth correction is applied. */
const MATCHED_RI_TOLERANCE = 0.002;

export async function runMeasurementPipeline(
  bytes: Uint8Array,
  params: MeasurementParameters,
  options: {
    maxVoxels?: number;
    /** A faster Deflate decoder (e.g. Node's zlib) injected by the caller; lib/tiff's pure one otherwise. */
    inflate?: (compressed: Uint8Array, out: Uint8Array) => number;
    onProgress?: (stage: AnalysisStage | "reading" | "modelling", fraction: number) => void;
  } = {},
): Promise<MeasurementPipelineResult> {
  const { onProgress } = options;
  onProgress?.("reading", 0);
  const { stack, metadata } = await readTiffStack(bytes, {
    channel: params.channel,
    maxVoxels: options.maxVoxels,
    minSlices: 2,
    inflate: options.inflate,
  });
  const voxelSizeUm = params.voxelSizeUm ?? stack.voxelSizeUm;
  if (!voxelSizeUm) {
    throw new AnalysisInputError(
      "missing_voxel_size",
      "The file does not say its voxel size. Enter the pixel size and z-step (µm) and run the measurement again.",
    );
  }
  stack.voxelSizeUm = voxelSizeUm;
  onProgress?.("reading", 1);

  const optics = {
    modality: params.modality,
    na: params.na,
    immersionRi: params.immersionRi,
    emissionWavelengthNm: params.emissionWavelengthNm,
    excitationWavelengthNm: params.excitationWavelengthNm,
    pinholeAu: params.pinholeAu,
  };
  const theory = theoreticalFwhm(optics);
  const sampling = checkSampling({ ...optics, voxelSizeUm });

  // Depth: the RI-mismatch model converts stage travel into actual depth; a matched
  // pair needs no conversion. The GL model is scalar widefield at the detection
  // wavelength; for other modalities it gives the relative broadening only.
  const mismatch = Math.abs(params.sampleRi - params.immersionRi) > MATCHED_RI_TOLERANCE;
  const nominalDepthUm = (stack.shape[0] - 1) * voxelSizeUm.z;
  const gl = {
    na: Math.min(params.na, params.immersionRi * 0.999),
    wavelengthNm: params.emissionWavelengthNm,
    immersionRi: params.immersionRi,
    sampleRi: params.sampleRi,
    coverslipThicknessUm: params.designCoverslipUm ?? 170,
  };
  onProgress?.("modelling", 0);
  const depth = mismatch
    ? makeNominalToActualDepth(gl, { maxDepthUm: Math.max(10, nominalDepthUm * 1.3) })
    : null;

  const analysis = analyzeStack(stack, {
    // Windows and exclusion distances scale with what the lens should do; real
    // lenses measure 10–30 % above theory (METHODS.md §2.2), so size for that.
    expectedFwhmUm: { lateral: (theory.lateralNm / 1000) * 1.2, axial: (theory.axialNm / 1000) * 1.2 },
    thresholdK: params.thresholdK,
    beadDiameterNm: params.beadDiameterNm,
    coverslipSlice: params.coverslipSlice,
    nominalToActualDepth: depth ? depth.toActualUm : undefined,
    excludedBeadIds: params.excludedBeadIds,
    onProgress,
  });

  onProgress?.("modelling", 0.5);
  const included = analysis.beads.filter((b) => b.included);
  const maxDepth = Math.max(5, ...included.map((b) => b.depthUm));
  const depths = Array.from({ length: 13 }, (_, i) => (maxDepth * 1.1 * i) / 12);
  const curve = predictDepthCurve(gl, depths);
  const surface = curve[0]!;
  const prediction = curve.map((row) => ({
    depthUm: row.depthUm,
    // Scale this modality's theoretical widths by the model's relative broadening.
    lateralFwhmUm:
      (theory.lateralNm / 1000) *
      (Number.isFinite(row.lateralFwhmUm) && Number.isFinite(surface.lateralFwhmUm)
        ? row.lateralFwhmUm / surface.lateralFwhmUm
        : 1),
    axialFwhmUm: (theory.axialNm / 1000) * (row.axialFwhmUm / surface.axialFwhmUm),
    peakRelative: row.peakRelative,
    focalShiftFactor: row.focalShiftFactor,
  }));
  onProgress?.("modelling", 0.6);
  const effectiveRi = fitSampleRi(analysis, params, theory, gl);
  onProgress?.("modelling", 1);

  return {
    analysis,
    metadata,
    voxelSizeUm,
    voxelSizeSource: params.voxelSizeUm ? "user" : "file",
    theory,
    sampling,
    depthModel: {
      model: depth ? depth.model : "matched (identity)",
      mismatch,
      converged: depth ? depth.converged : true,
    },
    prediction,
    effectiveRi,
  };
}

/** Depth bins needed, and the depth they must span, before an index fit means anything. */
const MIN_FIT_BINS = 3;
const MIN_FIT_SPAN_UM = 3;

/**
 * Fit the effective sample RI to the per-depth median axial widths. The model is
 * scalar widefield; for other modalities the measured widths are first scaled by
 * the ratio of the widefield to this modality's theoretical axial FWHM, so only
 * the relative broadening with depth drives the fit (an approximation, stated in
 * the result).
 */
function fitSampleRi(
  analysis: AnalyzeStackResult,
  params: MeasurementParameters,
  theory: TheoreticalFwhm,
  gl: { na: number; wavelengthNm: number; immersionRi: number; coverslipThicknessUm: number },
): MeasurementPipelineResult["effectiveRi"] {
  const rows = analysis.depthProfile
    .filter((r) => r.count >= 2 && r.fwhmZ.medianUm != null)
    .map((r) => ({
      depth: r.apparentDepthMedianUm,
      axial: r.fwhmZ.medianUm!,
      lateral: r.fwhmX.medianUm,
      asym: r.medianAxialAsymmetry,
    }));
  if (rows.length < MIN_FIT_BINS) {
    return {
      fit: null,
      reason: `Beads fall into ${rows.length} depth bin(s); an index fit needs at least ${MIN_FIT_BINS}.`,
    };
  }
  const span = Math.max(...rows.map((r) => r.depth)) - Math.min(...rows.map((r) => r.depth));
  if (span < MIN_FIT_SPAN_UM) {
    return {
      fit: null,
      reason: `Beads span only ${span.toFixed(1)} µm of depth; an index fit needs at least ${MIN_FIT_SPAN_UM} µm.`,
    };
  }
  const widefieldAxialNm = widefieldFwhm({
    na: params.na,
    immersionRi: params.immersionRi,
    wavelengthNm: params.emissionWavelengthNm,
  }).axialNm;
  const scale = params.modality === "widefield" ? 1 : widefieldAxialNm / theory.axialNm;
  try {
    const fit = fitEffectiveSampleRi(
      rows.map((r) => ({
        depthUm: r.depth,
        axialFwhmUm: r.axial * scale,
        ...(r.asym != null ? { asymmetry: r.asym } : {}),
        ...(r.lateral != null ? { lateralFwhmUm: r.lateral } : {}),
      })),
      { optics: gl, depthKind: "nominal" },
    );
    const verdict = judgeDeclaredRi(fit, params.sampleRi);
    return {
      fit,
      consistentWithDeclared: verdict.consistent,
      message: verdict.message,
      widefieldScale: scale,
    };
  } catch (err) {
    return {
      fit: null,
      reason: `The index fit could not run: ${err instanceof Error ? err.message : String(err)}`,
    };
  }
}
