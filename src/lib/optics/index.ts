// Public surface of lib/optics: explicit re-exports only.
export { besselJ0 } from "./bessel-j0";
export { besselJ1 } from "./bessel-j1";
export { gaussLegendre, type GaussLegendreRule } from "./gauss-legendre";
export {
  resolveGibsonLanniParams,
  type GibsonLanniParams,
  type ResolvedGibsonLanniParams,
} from "./gibson-lanni-params";
export {
  createGibsonLanniModel,
  gibsonLanniIntensity,
  gibsonLanniNodeCount,
  type GibsonLanniModel,
  type GibsonLanniPoint,
  type GibsonLanniIntensityOptions,
  type GibsonLanniPupilTable,
} from "./gibson-lanni-model";
export { gibsonLanniAxialProfile, type GibsonLanniAxialProfileOptions } from "./gibson-lanni-axial-profile";
export {
  gibsonLanniLateralProfile,
  type GibsonLanniLateralProfileOptions,
} from "./gibson-lanni-lateral-profile";
export {
  renderGibsonLanniVolume,
  type RenderGibsonLanniVolumeOptions,
  type GibsonLanniVolume,
} from "./render-gibson-lanni-volume";
export { effectiveNa, type EffectiveNaResult } from "./effective-na";
export { apertureHalfAngleDeg } from "./aperture-half-angle";
export {
  resolutionLimits,
  twoPointMidpointRatio,
  airyIntensity,
  BESSEL_J1_FIRST_ZERO,
  type ResolutionLimits,
} from "./resolution-limits";
export {
  widefieldFwhm,
  paraxialAxialWidths,
  AIRY_FWHM_CONSTANT,
  WIDEFIELD_AXIAL_CONSTANT,
  type FwhmNm,
} from "./widefield-fwhm";
export {
  confocalFwhm,
  CONFOCAL_LATERAL_CONSTANT,
  CONFOCAL_AXIAL_CONSTANT,
  SMALL_PINHOLE_AU,
  LARGE_PINHOLE_AU,
  type ConfocalFwhm,
} from "./confocal-fwhm";
export { twoPhotonFwhm, ZIPFEL_FWHM_PER_OMEGA } from "./two-photon-fwhm";
export {
  zhangGaussianSigma,
  zhangConfocalSigma,
  FWHM_PER_SIGMA,
  type GaussianSigmaNm,
} from "./gaussian-psf-sigma";
export {
  beadEquivalentFwhmNm,
  convolveBeadFwhmNm,
  correctBeadFwhmNm,
  BEAD_EQUIVALENT_FWHM_PER_DIAMETER,
  type BeadLabelling,
  type BeadCorrection,
} from "./bead-size-correction";
export {
  theoreticalFwhm,
  THEORETICAL_FWHM_VERSION,
  type Modality,
  type TheoreticalFwhmInput,
  type TheoreticalFwhm,
} from "./theoretical-fwhm";
export { nyquistSampling, type NyquistSampling } from "./nyquist-sampling";
export {
  checkSampling,
  MIN_PIXELS_ACROSS_LATERAL_FWHM,
  MIN_PLANES_ACROSS_AXIAL_FWHM,
  type SamplingVerdict,
  type SamplingAxisCheck,
  type SamplingCheck,
} from "./check-sampling";
export {
  axialScalingFactors,
  type AxialScalingFactors,
  type NamedScalingFactor,
} from "./axial-scaling-factors";
export { createMonotoneInterpolator, type Interpolator } from "./monotone-interpolator";
export {
  findGibsonLanniFocus,
  type FindGibsonLanniFocusOptions,
  type GibsonLanniFocus,
} from "./find-gibson-lanni-focus";
export {
  gibsonLanniDepthMetrics,
  type GibsonLanniDepthMetrics,
  type GibsonLanniDepthMetricsOptions,
} from "./gibson-lanni-depth-metrics";
export { predictDepthCurve } from "./predict-depth-curve";
export {
  makeNominalToActualDepth,
  type MakeNominalToActualDepthOptions,
  type NominalToActualDepth,
} from "./make-nominal-to-actual-depth";
export type { Medium, CustomMedium, MediumCategory, EvidenceTag, Dispersion } from "./media/medium-types";
export {
  listMedia,
  getMedium,
  glycerolWaterMedium,
  tdeWaterMedium,
  sucroseSolutionMedium,
  GLYCEROL_WATER_TABLE,
  SUCROSE_TABLE,
  SODIUM_D_NM,
  MERCURY_E_NM,
} from "./media/media-catalog";
export { refractiveIndex, type RefractiveIndexConditions } from "./media/refractive-index";
export { waterRefractiveIndexVacuum, waterDensityKgM3, WATER_DENSITY_TABLE } from "./media/water-iapws";
export { airRefractiveIndex } from "./media/air-refractive-index";
export { cauchyFromAbbe, type CauchyTwoTerm } from "./media/cauchy-from-abbe";
export { studentT975 } from "./student-t-quantile";
export {
  fitEffectiveSampleRi,
  judgeDeclaredRi,
  type DepthProfileRow,
  type FitOptics,
  type FitEffectiveSampleRiOptions,
  type FittedRow,
  type EffectiveSampleRiFit,
  type DeclaredRiVerdict,
} from "./fit-effective-sample-ri";
export {
  plannerRows,
  diffractionLimitedReference,
  type ObjectiveSpec,
  type PlannerRow,
  type DiffractionLimitedReference,
} from "./planner-rows";
export { rankObjectives, type RankObjectivesOptions, type ObjectiveRanking } from "./rank-objectives";
export {
  marechalStrehl,
  mismatchRmsWavefront,
  type MarechalStrehl,
  type MismatchRmsWavefront,
} from "./mismatch-aberration";
export { airyBestGaussianSigma } from "./airy-best-gaussian-sigma";
