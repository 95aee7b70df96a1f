/**
 * Result and option types of the bead-measurement engine. Every result is a plain,
 * JSON-serialisable object (numbers, strings, booleans, null, arrays; the averaged PSF
 * volume is a Float32Array). Values that could not be measured are `null`, never NaN.
 * Axes are (z, y, x); positions in voxels are 0-based.
 */

/** Why a detected bead is not used. The first applicable reason in this order wins. */
export type RejectReason =
  | "edge"
  | "saturated"
  | "neighbour"
  | "low_snr"
  | "fit_failed"
  | "width_out_of_bounds"
  | "poor_fit"
  | "aggregate"
  | "user_excluded";

/** Why an iterative fit stopped. */
export type FitStopReason = "converged" | "max_iterations" | "singular" | "non_finite" | "too_few_points";

/** One detected bead and everything measured on it (DESIGN.md §5 bead row, camel-cased). */
export interface BeadResult {
  /** 1-based, stable within one analysis (order of detection brightness). */
  id: number;
  /** Refined centre in voxels (0-based); zPx is the slice coordinate of the apparent focus. */
  xPx: number;
  yPx: number;
  zPx: number;
  /** Centre in µm: xPx·Δx, yPx·Δy, zPx·Δz (nominal z). */
  xUm: number;
  yUm: number;
  zUm: number;
  /** Depth below the coverslip after `nominalToActualDepth` (µm, positive into the sample). */
  depthUm: number;
  /** Nominal (apparent) depth below the coverslip reference: (z − ref)·Δz, sign-corrected (µm). */
  apparentDepthUm: number;
  /** FWHM of 1D Gaussian + offset fits of the profiles through the refined centre (µm; headline). */
  fwhmXUm: number | null;
  fwhmYUm: number | null;
  fwhmZUm: number | null;
  /** One-sigma standard errors of the 1D FWHMs from the fit covariance (µm). */
  fwhmXUncertaintyUm: number | null;
  fwhmYUncertaintyUm: number | null;
  fwhmZUncertaintyUm: number | null;
  /** Axial width interpolated linearly at half maximum above the local background (µm). */
  fwhmZDirectUm: number | null;
  /** FWHM from the 3D Gaussian fit along its principal axes (µm; secondary, reads widefield axial high). */
  fwhm3dXUm: number | null;
  fwhm3dYUm: number | null;
  fwhm3dZUm: number | null;
  fwhm3dXUncertaintyUm: number | null;
  fwhm3dYUncertaintyUm: number | null;
  fwhm3dZUncertaintyUm: number | null;
  /** In-plane rotation of the 3D fit's principal axes (rad), 0 when rotation is not fitted. */
  rotation3dRad: number | null;
  /** Peak height above background (counts; median of the three 1D fits). */
  amplitude: number | null;
  /** Local background (counts): mean offset of the x and y 1D fits (their windows reach the background). */
  background: number | null;
  /** amplitude / stack noise σ (robust MAD estimate). */
  snr: number | null;
  /** Coefficient of determination of each fit, and `r2` = the smallest of the three 1D values. */
  r2X: number | null;
  r2Y: number | null;
  r2Z: number | null;
  r23d: number | null;
  r2: number | null;
  /** Axial side-lobe ratio: (max lobe far side − max lobe near side)/peak within ±4 axial FWHM (METHODS §8). */
  axialAsymmetry: number | null;
  /** Skewness of the per-plane integrated intensity about the peak, positive toward the far side. */
  axialSkewness: number | null;
  /** Energy far side / energy near side of the peak plane (per-plane integrated, background-subtracted). */
  axialEnergyRatio: number | null;
  /** min/max of the lateral FWHMs (1 = round; lateral asymmetry ratio). */
  lateralAsymmetry: number | null;
  /** Lateral centroid drift through focus, magnitude of d(x,y)/dz (µm per µm). */
  driftUmPerUm: number | null;
  /** Brightest raw voxel value in the bead window (counts). */
  peak: number;
  /** Sum of background-subtracted voxels in the fixed integration window (counts). */
  integrated: number | null;
  /** Whether the bead enters the summaries (after user overrides). */
  included: boolean;
  /** First applicable reason when not included by the engine; null when accepted. */
  rejectReason: RejectReason | null;
  /** Every reason that applied (engine's), first one = `rejectReason`. */
  rejectReasons: RejectReason[];
  /** Convergence of the x, y, z and 3D fits. */
  fitConverged: { x: boolean; y: boolean; z: boolean; xyz: boolean };
}

/** Median, quartiles and range of one width over the included beads (µm). */
export interface WidthStatistics {
  count: number;
  medianUm: number | null;
  q1Um: number | null;
  q3Um: number | null;
  iqrUm: number | null;
  minUm: number | null;
  maxUm: number | null;
  /** Median of the per-bead fit uncertainties (µm). */
  medianFitUncertaintyUm: number | null;
  /** Standard error of the median from the spread: 1.2533·(IQR/1.349)/√n (µm). */
  medianStandardErrorUm: number | null;
  /** Median after bead-size correction by quadrature; null when not applicable. */
  medianCorrectedUm: number | null;
}

/** The bead-size correction that was (or was not) applied. */
export interface BeadSizeCorrection {
  beadDiameterNm: number | null;
  beadLabel: "solid" | "shell";
  /** Gaussian-equivalent FWHM of the bead (µm): 0.5265·d solid, 0.6798·d shell. */
  beadFwhmUm: number | null;
  /** Per axis: applied only when 0.5265·d < 0.5·measured median FWHM (METHODS §7). */
  appliedLateral: boolean;
  appliedAxial: boolean;
}

/** Counts and robust width statistics over a bead list (`summarizeBeads`); widths in µm. */
export interface PsfSummary {
  found: number;
  used: number;
  rejected: number;
  rejectedByReason: Partial<Record<RejectReason, number>>;
  fwhmX: WidthStatistics;
  fwhmY: WidthStatistics;
  fwhmZ: WidthStatistics;
  fwhmZDirect: WidthStatistics;
  fwhm3dX: WidthStatistics;
  fwhm3dY: WidthStatistics;
  fwhm3dZ: WidthStatistics;
  /** Medians over included beads of the shape figures (null when none). */
  medianLateralAsymmetry: number | null;
  medianAxialAsymmetry: number | null;
  medianAxialSkewness: number | null;
  medianDriftUmPerUm: number | null;
  medianSnr: number | null;
  beadSizeCorrection: BeadSizeCorrection;
}

/** Median / quartiles of one width in one depth bin (µm). */
export interface BinWidth {
  medianUm: number | null;
  q1Um: number | null;
  q3Um: number | null;
  medianCorrectedUm: number | null;
}

/** One adaptive-width depth bin of included beads (`depthProfile`); depths and widths in µm. */
export interface DepthProfileRow {
  /** Actual depth range of the bin [start, end] and its median (µm). */
  depthStartUm: number;
  depthEndUm: number;
  depthMedianUm: number;
  apparentDepthMedianUm: number;
  count: number;
  fwhmX: BinWidth;
  fwhmY: BinWidth;
  fwhmZ: BinWidth;
  fwhmZDirect: BinWidth;
  medianAxialAsymmetry: number | null;
}

/** Theil–Sen line y = intercept + slope·x with a rank-based interval on the slope. */
export interface RobustTrend {
  n: number;
  slope: number | null;
  intercept: number | null;
  slopeLow: number | null;
  slopeHigh: number | null;
  /** Confidence level of [slopeLow, slopeHigh]. */
  confidence: number;
}

/** Widths vs actual depth (slopes in µm per µm of depth). */
export interface DepthTrend {
  fwhmX: RobustTrend;
  fwhmY: RobustTrend;
  fwhmZ: RobustTrend;
  fwhmZDirect: RobustTrend;
  axialAsymmetry: RobustTrend;
}

/** Registered mean of the included beads (`averagePsf`); volume in units of each bead's amplitude. */
export interface AveragedPsf {
  /** [nz, ny, nx] */
  shape: [number, number, number];
  voxelSizeUm: { x: number; y: number; z: number };
  /** Background-subtracted, amplitude-normalised mean volume, row-major (z, y, x); centre voxel at the bead centre. */
  data: Float32Array;
  beadCount: number;
  fwhmXUm: number | null;
  fwhmYUm: number | null;
  fwhmZUm: number | null;
  fwhmZDirectUm: number | null;
  axialAsymmetry: number | null;
}

/** Medians over the beads of one field region (central or full); widths in µm. */
export interface RegionStatistics {
  count: number;
  medianFwhmXUm: number | null;
  medianFwhmYUm: number | null;
  medianFwhmZUm: number | null;
  medianLateralAsymmetry: number | null;
}

/** Best-focus surface z(x, y) over the field (µm); coefficients for x, y in µm from the field centre. */
export interface FocusSurface {
  n: number;
  /** Plane: z = c0 + c1·x + c2·y. Quadratic: + c3·x² + c4·x·y + c5·y². */
  coefficients: number[] | null;
  /** Tilt of the plane fit (µm of z per µm of field), magnitude. */
  tiltUmPerUm: number | null;
  /** max − min of the fitted surface over the field rectangle (µm). */
  planarityPeakToValleyUm: number | null;
  /** RMS of the fitted surface about its mean over the field rectangle (µm). */
  planarityRmsUm: number | null;
  /** RMS residual of beads about the surface (µm). */
  residualRmsUm: number | null;
}

/** Field dependence of the PSF (`fieldDependence`); positions and widths in µm. */
export interface FieldDependence {
  /** Field centre (µm) and radius = centre-to-corner distance (µm). */
  centreXUm: number;
  centreYUm: number;
  fieldRadiusUm: number;
  /** Central region radius as a fraction of the field radius. */
  centralFraction: number;
  central: RegionStatistics;
  full: RegionStatistics;
  /** Widths and lateral asymmetry vs radial distance from the centre (µm per µm). */
  fwhmXVsRadius: RobustTrend;
  fwhmYVsRadius: RobustTrend;
  fwhmZVsRadius: RobustTrend;
  lateralAsymmetryVsRadius: RobustTrend;
  /** Beads used for the focus surface (those in the coverslip layer) and the two fits. */
  focusLayerThicknessUm: number;
  plane: FocusSurface;
  quadratic: FocusSurface;
}

/** What produced a result: engine version, every resolved parameter and the stack-level estimates. */
export interface Provenance {
  engineVersion: string;
  /** Every resolved parameter (functions reported by name only). */
  parameters: Record<string, unknown>;
  /** Stack-level estimates the analysis depended on. */
  stack: {
    shape: [number, number, number];
    dtype: string;
    voxelSizeUm: { x: number; y: number; z: number };
    backgroundMedian: number;
    noiseSigma: number;
    backgroundMethod: "histogram" | "subsample";
    saturationLevel: number;
    detectionThreshold: number;
    coverslipSlice: number;
    coverslipSource: "user" | "estimated" | "default";
  };
  candidatesAboveThreshold: number;
  candidatesMerged: number;
}

/** Everything `analyzeStack` returns; plain serialisable data. */
export interface AnalyzeStackResult {
  beads: BeadResult[];
  summary: PsfSummary;
  depthProfile: DepthProfileRow[];
  trend: DepthTrend;
  averagedPsf: AveragedPsf | null;
  field: FieldDependence;
  provenance: Provenance;
}

/** Pipeline stage reported through `onProgress`. */
export type AnalysisStage = "detecting" | "fitting" | "aggregating";

/** Options of {@link analyzeStack}. Defaults live in `resolveAnalyzeOptions`. */
export interface AnalyzeStackOptions {
  /** Expected (theoretical) FWHM in µm, used to size windows, smoothing and exclusion distances. Required. */
  expectedFwhmUm: { lateral: number; axial: number };
  /** Detection threshold in units of the smoothed-image noise σ above the background. @default 6 */
  thresholdK?: number;
  /** Minimum separation of two detections (µm): lateral, axial. Closer maxima are merged (the brighter kept). @default { lateral: 2·FWHM_lat, axial: 4·FWHM_ax } (a number sets the lateral value). Dimmer on-axis maxima up to
   * 8·FWHM_ax away (< 0.6 of the brighter) are merged too: side lobes of depth-aberrated PSFs (METHODS §8). */
  minSeparationUm?: number | { lateral: number; axial: number };
  /**
   * Maxima dimmer than this fraction of a brighter one within max(exclusion, 8) expected FWHM laterally and max(exclusion, 6) axially are
   * merged into it (Airy and defocus rings of bright beads, ≲ 0.1 of the peak on GL renders). @default 0.15
   */
  secondaryFraction?: number;
  /** Neighbour exclusion ellipsoid in units of the expected FWHM. @default { lateral: 3, axial: 2 } */
  exclusionFactor?: { lateral: number; axial: number };
  /** Counts at or above which a voxel is saturated. @default dtype maximum */
  saturationCeiling?: number;
  /** Minimum amplitude / noise σ. @default 10 */
  snrFloor?: number;
  /** Integrated intensity above this × the population median → aggregate. @default 1.8 */
  aggregateFactor?: number;
  /** Minimum R² of each 1D fit. @default 0.9 */
  r2Floor?: number;
  /** Lateral fit half-window in expected lateral FWHM. @default 2 */
  lateralWindowFwhm?: number;
  /** Axial fit half-window in (measured) axial FWHM. @default 1.5 */
  axialWindowFwhm?: number;
  /** Fit the 3D Gaussian with an in-plane rotation. @default false */
  fit3dRotation?: boolean;
  /** Skip the 3D fit (faster). @default false */
  skip3dFit?: boolean;
  /** LM iterations for the 1D / 3D fits (ml-levenberg-marquardt always runs them all on noisy data). @default 30 / 10 (the 3D fit is seeded from the 1D fits) */
  maxIterations1d?: number;
  maxIterations3d?: number;
  beadDiameterNm?: number;
  /** @default "solid" */
  beadLabel?: "solid" | "shell";
  /** Slice index (may be fractional) of the coverslip surface; estimated when absent. */
  coverslipSlice?: number;
  /** Percentile of included beads' z taken as the coverslip layer when estimating it. @default 5 */
  coverslipPercentile?: number;
  /** Nominal → actual depth (µm → µm), from the optics module. @default identity */
  nominalToActualDepth?: (nominalUm: number) => number;
  /** True when increasing z index goes away from the coverslip, into the sample. @default true */
  intoSampleIsIncreasingZ?: boolean;
  /** Bead ids the user excluded. */
  excludedBeadIds?: number[];
  /** Per-bead include/exclude overrides by id (wins over `excludedBeadIds` and the engine's decision). */
  includedOverrides?: Record<number, boolean>;
  /** Minimum beads per depth bin. @default 5 */
  minBeadsPerBin?: number;
  /** Maximum number of depth bins. @default 10 */
  maxDepthBins?: number;
  /** Central field region as a fraction of the field radius. @default 0.5 */
  centralFraction?: number;
  /** Compute the averaged PSF. @default true */
  averagePsf?: boolean;
  onProgress?: (stage: AnalysisStage, fraction: number) => void;
}
