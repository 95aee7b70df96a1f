/**
 * The whole analysis of one stack, composed from lib/tiff, lib/psf and lib/optics:
 * read the channel, work out the theoretical widths for the lens/medium pair,
 * convert nominal focus travel to actual depth with the RI-mismatch model, measure
 * every bead, and predict the depth profile the model expects. Pure: bytes and
 * plain parameters in, a plain serialisable result out.
 */
import {
  checkSampling,
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
  options: { maxVoxels?: number; onProgress?: (stage: AnalysisStage | "reading" | "modelling", fraction: number) => void } = {},
): Promise<MeasurementPipelineResult> {
  const { onProgress } = options;
  onProgress?.("reading", 0);
  const { stack, metadata } = await readTiffStack(bytes, {
    channel: params.channel,
    maxVoxels: options.maxVoxels,
    minSlices: 2,
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
  const depth = mismatch ? makeNominalToActualDepth(gl, { maxDepthUm: Math.max(10, nominalDepthUm * 1.3) }) : null;

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
      (Number.isFinite(row.lateralFwhmUm) && Number.isFinite(surface.lateralFwhmUm) ? row.lateralFwhmUm / surface.lateralFwhmUm : 1),
    axialFwhmUm: (theory.axialNm / 1000) * (row.axialFwhmUm / surface.axialFwhmUm),
    peakRelative: row.peakRelative,
    focalShiftFactor: row.focalShiftFactor,
  }));
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
  };
}
