/**
 * The whole analysis of one stack, composed from lib/tiff, lib/psf and lib/optics:
 * read the channel, work out the theoretical widths for the lens/medium pair,
 * convert nominal focus travel to actual depth with the RI-mismatch model, measure
 * every bead, and predict the depth profile the model expects. When the stack has
 * several channels, every other channel is measured too and co-registered with the
 * measurement's channel. Pure: bytes and plain parameters in, a plain serialisable
 * result out.
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
import type { AnalysisStage, AnalyzeStackResult, RobustTrend } from "./analysis-types";
import { coregisterChannels, type CoregistrationPair } from "./coregister-channels";

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
  /** One entry per other channel of a multi-channel stack; null for a single-channel stack. */
  coregistration: ChannelCoregistration[] | null;
}

/**
 * Co-registration of one other channel (test) with the measurement's channel (reference):
 * the ISO 21073 shifts as quoted by NBO (QC-PRACTICE.md §4.1), Δlateral = √(Δx² + Δy²) and
 * Δaxial = |Δz| between the refined centres of the same bead in both channels, summarised by
 * their medians and compared with the reference channel's theoretical FWHM (the resolution in
 * that direction; shift/resolution < 1 is common practice, QC-PRACTICE.md §2). Positions are
 * nominal (stage) µm; the depth axis of the trends is the reference bead's actual depth.
 */
export interface ChannelCoregistration {
  /** The measurement's channel (0-based). */
  referenceChannel: number;
  /** The other channel (0-based). */
  testChannel: number;
  /**
   * Emission wavelength (nm) behind the test channel's expected FWHM (bead windows, detection
   * spacing): the file's value for that channel when it declares one, otherwise the measurement's
   * own wavelength — an approximation for a channel of another colour.
   */
  testEmissionWavelengthNm: number;
  testWavelengthSource: "file" | "measurement";
  /** The resolution the shifts are compared with: the reference channel's theoretical FWHM, µm. */
  resolutionUm: { lateral: number; axial: number };
  /** Largest 3D distance (µm) at which two beads are taken to be the same object. */
  toleranceUm: number;
  /** Included beads of each channel. */
  referenceBeads: number;
  testBeads: number;
  /** Matched pairs (mutual nearest neighbours within the tolerance). */
  pairCount: number;
  unmatchedReference: number;
  unmatchedTest: number;
  /** Median √(Δx² + Δy²) and |Δz| over the pairs, µm. */
  medianLateralUm: number | null;
  medianAxialUm: number | null;
  /** Median signed shifts (test − reference), µm. */
  medianDxUm: number | null;
  medianDyUm: number | null;
  medianDzUm: number | null;
  /** Median shift / resolution in that direction. */
  lateralRatio: number | null;
  axialRatio: number | null;
  /** Shifts against the reference bead's actual depth (Theil–Sen; slopes in µm per µm). */
  lateralVsDepth: RobustTrend;
  axialVsDepth: RobustTrend;
  dzVsDepth: RobustTrend;
  /** The matched pairs, at most {@link MAX_COREGISTRATION_PAIRS} (in reference-bead order). */
  pairs: CoregistrationPair[];
  pairsTruncated: boolean;
  /** Why the channel could not be co-registered (then the figures are null and `pairs` empty). */
  reason: string | null;
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

/** Per-bead pairs kept per channel pair in the result (the summaries use all of them). */
export const MAX_COREGISTRATION_PAIRS = 500;

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

  // With several channels the other channels are measured after this one; the "fitting"
  // fraction then covers all of them, so it never runs backwards.
  const channelCount = Math.max(1, metadata.channels.value);
  const mainProgress =
    onProgress && channelCount > 1
      ? (stage: AnalysisStage, fraction: number) =>
          stage === "detecting"
            ? onProgress(stage, fraction)
            : onProgress("fitting", (stage === "fitting" ? fraction : 1) / channelCount)
      : onProgress;
  const analysis = analyzeStack(stack, {
    // Windows and exclusion distances scale with what the lens should do; real
    // lenses measure 10–30 % above theory (METHODS.md §2.2), so size for that.
    expectedFwhmUm: { lateral: (theory.lateralNm / 1000) * 1.2, axial: (theory.axialNm / 1000) * 1.2 },
    thresholdK: params.thresholdK,
    beadDiameterNm: params.beadDiameterNm,
    coverslipSlice: params.coverslipSlice,
    nominalToActualDepth: depth ? depth.toActualUm : undefined,
    excludedBeadIds: params.excludedBeadIds,
    onProgress: mainProgress,
  });

  const coregistration =
    channelCount > 1
      ? await coregisterOtherChannels(bytes, params, analysis, {
          channelCount,
          voxelSizeUm,
          theory,
          optics,
          nominalToActualDepth: depth ? depth.toActualUm : undefined,
          maxVoxels: options.maxVoxels,
          inflate: options.inflate,
          onProgress: onProgress
            ? (done, fraction) => onProgress("fitting", (1 + done + fraction) / channelCount)
            : undefined,
        })
      : null;

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
    coregistration,
  };
}

/**
 * Measure every channel other than the measurement's with the same voxel size and options,
 * then co-register each with the measurement's channel. A channel that cannot be read or
 * measured gets an entry with its `reason`; it never fails the measurement.
 */
async function coregisterOtherChannels(
  bytes: Uint8Array,
  params: MeasurementParameters,
  reference: AnalyzeStackResult,
  o: {
    channelCount: number;
    voxelSizeUm: { x: number; y: number; z: number };
    theory: TheoreticalFwhm;
    optics: Parameters<typeof theoreticalFwhm>[0];
    nominalToActualDepth: ((nominalUm: number) => number) | undefined;
    maxVoxels: number | undefined;
    inflate: ((compressed: Uint8Array, out: Uint8Array) => number) | undefined;
    /** `done` other channels finished, `fraction` of the current one. */
    onProgress?: (done: number, fraction: number) => void;
  },
): Promise<ChannelCoregistration[]> {
  const resolutionUm = { lateral: o.theory.lateralNm / 1000, axial: o.theory.axialNm / 1000 };
  // One 3D distance decides a match. About one lateral FWHM (the first choice) would leave a
  // bead unmatched whenever its axial shift exceeds that, and the median of the remaining pairs
  // would read low — a badly registered channel could pass. So the tolerance is the larger of
  // the two resolutions (in practice the axial FWHM): any shift up to the resolution in either
  // direction still pairs. Neighbours are kept apart by coregisterChannels' mutual-nearest-
  // neighbour rule and by detection, which merges maxima of one channel closer than 2 lateral
  // FWHM (when also within 4 axial FWHM).
  const toleranceUm = Math.max(resolutionUm.lateral, resolutionUm.axial);
  const referenceBeads = reference.beads.filter((b) => b.included).length;
  const out: ChannelCoregistration[] = [];
  const others = Array.from({ length: o.channelCount }, (_, c) => c).filter((c) => c !== params.channel);
  for (let k = 0; k < others.length; k++) {
    const c = others[k];
    const base = {
      referenceChannel: params.channel,
      testChannel: c,
      testEmissionWavelengthNm: params.emissionWavelengthNm,
      testWavelengthSource: "measurement" as "file" | "measurement",
      resolutionUm,
      toleranceUm,
      referenceBeads,
    };
    try {
      const { stack, metadata } = await readTiffStack(bytes, {
        channel: c,
        maxVoxels: o.maxVoxels,
        minSlices: 2,
        inflate: o.inflate,
      });
      stack.voxelSizeUm = o.voxelSizeUm;
      // This channel's expected widths: its own emission (and excitation) when the file says them.
      const emission = metadata.emissionWavelengthNm?.value;
      const excitation = metadata.excitationWavelengthNm?.value;
      const own = emission != null && emission > 0;
      if (own) {
        base.testEmissionWavelengthNm = emission;
        base.testWavelengthSource = "file";
      }
      const testTheory = own
        ? theoreticalFwhm({
            ...o.optics,
            emissionWavelengthNm: emission,
            excitationWavelengthNm:
              excitation != null && excitation > 0 ? excitation : o.optics.excitationWavelengthNm,
          })
        : o.theory;
      const test = analyzeStack(stack, {
        expectedFwhmUm: {
          lateral: (testTheory.lateralNm / 1000) * 1.2,
          axial: (testTheory.axialNm / 1000) * 1.2,
        },
        thresholdK: params.thresholdK,
        beadDiameterNm: params.beadDiameterNm,
        coverslipSlice: params.coverslipSlice,
        nominalToActualDepth: o.nominalToActualDepth,
        onProgress: o.onProgress
          ? (stage, f) =>
              o.onProgress!(k, stage === "detecting" ? 0.1 * f : stage === "fitting" ? 0.1 + 0.9 * f : 1)
          : undefined,
      });
      const r = coregisterChannels(reference.beads, test.beads, { toleranceUm, resolutionUm });
      out.push({
        ...base,
        testBeads: test.beads.filter((b) => b.included).length,
        pairCount: r.pairs.length,
        unmatchedReference: r.unmatchedReference,
        unmatchedTest: r.unmatchedTest,
        medianLateralUm: r.medianLateralUm,
        medianAxialUm: r.medianAxialUm,
        medianDxUm: r.medianDxUm,
        medianDyUm: r.medianDyUm,
        medianDzUm: r.medianDzUm,
        lateralRatio: r.lateralRatio,
        axialRatio: r.axialRatio,
        lateralVsDepth: r.lateralVsDepth,
        axialVsDepth: r.axialVsDepth,
        dzVsDepth: r.dzVsDepth,
        pairs: r.pairs.slice(0, MAX_COREGISTRATION_PAIRS),
        pairsTruncated: r.pairs.length > MAX_COREGISTRATION_PAIRS,
        reason: r.pairs.length ? null : "No bead was found in both channels within the matching tolerance.",
      });
    } catch (err) {
      const none: RobustTrend = {
        n: 0,
        slope: null,
        intercept: null,
        slopeLow: null,
        slopeHigh: null,
        confidence: 0.95,
      };
      out.push({
        ...base,
        testBeads: 0,
        pairCount: 0,
        unmatchedReference: referenceBeads,
        unmatchedTest: 0,
        medianLateralUm: null,
        medianAxialUm: null,
        medianDxUm: null,
        medianDyUm: null,
        medianDzUm: null,
        lateralRatio: null,
        axialRatio: null,
        lateralVsDepth: none,
        axialVsDepth: none,
        dzVsDepth: none,
        pairs: [],
        pairsTruncated: false,
        reason: `Channel ${c + 1} could not be measured: ${err instanceof Error ? err.message : String(err)}`,
      });
    }
    o.onProgress?.(k + 1, 0);
  }
  return out;
}

/** Depth bins needed, and the depth they must span, before an index fit means anything. */
const MIN_FIT_BINS = 3;
const MIN_FIT_SPAN_UM = 3;
/** How far above the estimated coverslip a depth bin may sit and still count as at the surface. */
const ABOVE_SURFACE_TOLERANCE_UM = 1;

/**
 * Fit the effective sample RI to the per-depth median axial widths. The model is
 * scalar widefield; for other modalities the measured widths are first scaled by
 * the ratio of the widefield to this modality's theoretical axial FWHM, so only
 * the relative broadening with depth drives the fit (an approximation, stated in
 * the result).
 */
export function fitSampleRi(
  analysis: Pick<AnalyzeStackResult, "depthProfile">,
  params: MeasurementParameters,
  theory: TheoreticalFwhm,
  gl: { na: number; wavelengthNm: number; immersionRi: number; coverslipThicknessUm: number },
): MeasurementPipelineResult["effectiveRi"] {
  const rows = analysis.depthProfile
    .filter((r) => r.count >= 2 && r.fwhmZ.medianUm != null)
    // The coverslip reference is a low percentile of the beads' positions, so the shallowest
    // bin can sit a little above it; those beads are at the surface within that estimate.
    // A bin far above the surface is not in the sample and does not inform the fit.
    .filter((r) => r.apparentDepthMedianUm >= -ABOVE_SURFACE_TOLERANCE_UM)
    .map((r) => ({
      depth: Math.max(0, r.apparentDepthMedianUm),
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
