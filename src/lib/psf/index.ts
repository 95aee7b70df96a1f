/** Bead-based PSF measurement engine (issue 4). Pure TypeScript; see each module's TSDoc. */
export { ENGINE_VERSION, FWHM_PER_SIGMA } from "./engine-version";
export type {
  AnalysisStage,
  AnalyzeStackOptions,
  AnalyzeStackResult,
  AveragedPsf,
  BeadResult,
  BeadSizeCorrection,
  BinWidth,
  DepthProfileRow,
  DepthTrend,
  FieldDependence,
  FitStopReason,
  FocusSurface,
  Provenance,
  PsfSummary,
  RegionStatistics,
  RejectReason,
  RobustTrend,
  WidthStatistics,
} from "./analysis-types";
export { analyzeStack } from "./analyze-stack";
export {
  recomputeSummary,
  applyInclusion,
  type RecomputeSummaryOptions,
  type RecomputedSummary,
} from "./recompute-summary";
export { resolveAnalyzeOptions, type ResolvedAnalyzeOptions } from "./resolve-analyze-options";
export {
  estimateBackground,
  type BackgroundEstimate,
  type EstimateBackgroundOptions,
} from "./estimate-background";
export {
  detectBeads,
  type DetectBeadsOptions,
  type DetectBeadsResult,
  type DetectedPeak,
} from "./detect-beads";
export { gaussianKernel } from "./gaussian-kernel";
export { measureBead, type BeadMeasurement, type MeasureBeadOptions } from "./measure-bead";
export { fitModel, type FitModelOptions, type FitModelResult, type IndexedModel } from "./fit-model";
export {
  fitGaussian1d,
  seedGaussian1d,
  type FitGaussian1dOptions,
  type Gaussian1dFit,
} from "./fit-gaussian-1d";
export {
  fitGaussian3d,
  type FitGaussian3dOptions,
  type Gaussian3dFit,
  type Gaussian3dParams,
  type Window3d,
} from "./fit-gaussian-3d";
export { halfMaximumWidth, type HalfMaximumWidth } from "./half-maximum-width";
export { axialAsymmetry, type AxialAsymmetry } from "./axial-asymmetry";
export { correctForBeadSize, BEAD_FWHM_PER_DIAMETER, type BeadSizeCorrected } from "./bead-size-correction";
export { summarizeBeads, widthStatistics, type SummarizeBeadsOptions } from "./summarize-beads";
export { depthProfile, depthTrend, type DepthProfileOptions } from "./depth-profile";
export { theilSen, normalQuantile } from "./theil-sen";
export { quantile, quantileSorted, median, madSigma, sortedFinite } from "./quantile";
export { averagePsf, type AveragePsfOptions } from "./average-psf";
export { fieldDependence, fitSurface, type FieldDependenceOptions } from "./field-dependence";
export {
  coregisterChannels,
  type CoregisterChannelsOptions,
  type Coregistration,
  type CoregistrationPair,
} from "./coregister-channels";
