import type { Stack } from "../tiff/stack";
import type { AnalyzeStackOptions, AnalyzeStackResult, BeadResult, RejectReason } from "./analysis-types";
import { averagePsf } from "./average-psf";
import { detectBeads } from "./detect-beads";
import { depthProfile, depthTrend } from "./depth-profile";
import { ENGINE_VERSION, FWHM_PER_SIGMA } from "./engine-version";
import { estimateBackground } from "./estimate-background";
import { fieldDependence } from "./field-dependence";
import { measureBead, type BeadMeasurement } from "./measure-bead";
import { median, quantile } from "./quantile";
import { applyInclusion } from "./recompute-summary";
import { resolveAnalyzeOptions } from "./resolve-analyze-options";
import { summarizeBeads } from "./summarize-beads";

/**
 * Analyse a bead z-stack end to end: background and noise, detection, per-bead fits and
 * shape figures, rejection with reasons, depth, per-depth aggregation and trend, averaged PSF,
 * field dependence and provenance.
 *
 * @param stack - shape [z, y, x], voxel size in µm required (not mutated)
 * @param options - see {@link AnalyzeStackOptions}; `expectedFwhmUm` is required
 * @returns plain serialisable result: beads (all detections, rejected ones with their reason),
 *   summary, depthProfile, trend, averagedPsf, field, provenance
 * @throws TypeError / RangeError naming the bad argument (see `resolveAnalyzeOptions`)
 *
 * Notes: stages and what decides each bead —
 * 1. background = stack median, noise σ = 1.4826·MAD (histogram for 8/16-bit);
 * 2. detection on the lightly smoothed stack (σ = ½ the expected PSF σ per axis, clamped to
 *    0.5–1 voxel), threshold background + k·σ_smoothed, merge within `minSeparationUm`, and merge maxima
 *    dimmer than `secondaryFraction` × a brighter one within max(exclusion, 8) lateral and
 *    max(exclusion, 6) axial expected FWHM (Airy/defocus rings), and on-axis maxima within 8 expected axial FWHM
 *    dimmer than 0.6 × a brighter one (side lobes, METHODS §8 up to ≈ 0.4 of the peak);
 * 3. per bead (`measureBead`); reasons, first applicable wins: `edge` (fit window leaves the stack),
 *    `saturated` (a voxel ≥ ceiling near the peak), `neighbour` (another detection inside the
 *    ellipsoid exclusionFactor·expected FWHM), `low_snr` (amplitude/σ < snrFloor), `fit_failed`,
 *    `width_out_of_bounds` (a σ at its bound), `poor_fit` (a 1D R² < r2Floor), `aggregate`
 *    (integrated > aggregateFactor × median of the otherwise accepted beads; needs ≥ 3 of them);
 * 4. depth: coverslip = user slice or the `coverslipPercentile` of accepted beads' z; apparent
 *    depth = (z − ref)·Δz (positive into the sample), actual = nominalToActualDepth(apparent).
 * References: METHODS.md §7–§8; QC-PRACTICE.md §2, §4; DESIGN.md §4–§5.
 * @example
 * const r = analyzeStack(stack, { expectedFwhmUm: { lateral: 0.25, axial: 0.7 } });
 * r.summary.fwhmX.medianUm;
 */
export function analyzeStack(stack: Stack, options: AnalyzeStackOptions): AnalyzeStackResult {
  const o = resolveAnalyzeOptions(stack, options);
  const vs = stack.voxelSizeUm!;
  const [nz, ny, nx] = stack.shape;
  const progress = o.onProgress;
  progress?.("detecting", 0);
  const bg = estimateBackground(stack);
  const smooth = (f: number, v: number) => Math.min(1, Math.max(0.5, (0.5 * f) / FWHM_PER_SIGMA / v));
  const det = detectBeads(stack, {
    background: bg.median,
    noiseSigma: bg.noiseSigma,
    smoothingSigmaPx: {
      x: smooth(o.expectedFwhmUm.lateral, vs.x),
      y: smooth(o.expectedFwhmUm.lateral, vs.y),
      z: smooth(o.expectedFwhmUm.axial, vs.z),
    },
    thresholdK: o.thresholdK,
    minSeparationUm: o.minSeparationUm,
    secondaryFraction: o.secondaryFraction,
    // Side lobes of a PSF broadened ≈ 2× by depth aberration lie up to ±4 of its FWHM away: 8 matched FWHM.
    axialLobe: { axialUm: 8 * o.expectedFwhmUm.axial, fraction: 0.6 },
    // Side lobes of a depth-aberrated PSF reach several matched axial FWHM from the peak (METHODS §8), and the
    // defocus rings in those lobe planes 4–7 lateral FWHM off axis (seen on GL renders, oil → water 10 µm),
    // hence ≥ 8 laterally and ≥ 6 axially.
    secondaryZoneUm: {
      lateral: Math.max(o.exclusionFactor.lateral, 8) * o.expectedFwhmUm.lateral,
      axial: Math.max(o.exclusionFactor.axial, 6) * o.expectedFwhmUm.axial,
    },
    onProgress: progress ? (f) => progress("detecting", f) : undefined,
  });
  progress?.("fitting", 0);
  const peaks = det.peaks;
  const measurements: BeadMeasurement[] = [];
  for (let i = 0; i < peaks.length; i++) {
    measurements.push(
      measureBead(stack, peaks[i], {
        expectedFwhmUm: o.expectedFwhmUm,
        lateralWindowFwhm: o.lateralWindowFwhm,
        axialWindowFwhm: o.axialWindowFwhm,
        saturationLevel: o.saturationLevel,
        stackBackground: bg.median,
        noiseSigma: bg.noiseSigma,
        farIsIncreasingZ: o.intoSampleIsIncreasingZ,
        fit3d: !o.skip3dFit,
        fit3dRotation: o.fit3dRotation,
        maxIterations1d: o.maxIterations1d,
        maxIterations3d: o.maxIterations3d,
      }),
    );
    if (progress && (i % 8 === 7 || i === peaks.length - 1)) progress("fitting", (i + 1) / peaks.length);
  }
  progress?.("aggregating", 0);

  // Reasons, in the documented order.
  const reasons: RejectReason[][] = measurements.map(() => []);
  const exL = o.exclusionFactor.lateral * o.expectedFwhmUm.lateral;
  const exA = o.exclusionFactor.axial * o.expectedFwhmUm.axial;
  for (let i = 0; i < peaks.length; i++) {
    const m = measurements[i];
    const r = reasons[i];
    if (m.edge) r.push("edge");
    if (m.saturated) r.push("saturated");
    for (let j = 0; j < peaks.length; j++) {
      if (j === i) continue;
      const dx = (peaks[j].x - peaks[i].x) * vs.x;
      const dy = (peaks[j].y - peaks[i].y) * vs.y;
      const dz = (peaks[j].z - peaks[i].z) * vs.z;
      if ((dx * dx + dy * dy) / (exL * exL) + (dz * dz) / (exA * exA) < 1) {
        r.push("neighbour");
        break;
      }
    }
    const snr = m.snr ?? peaks[i].height / bg.noiseSigma;
    if (!(snr >= o.snrFloor)) r.push("low_snr");
    if (!m.edge) {
      if (m.fitFailed) r.push("fit_failed");
      else {
        if (m.widthAtBound) r.push("width_out_of_bounds");
        const r2s = [m.r2X, m.r2Y, m.r2Z];
        if (r2s.some((v) => v === null || v < o.r2Floor)) r.push("poor_fit");
      }
    }
  }
  const clean = measurements
    .map((m, i) => (reasons[i].length === 0 && m.integrated !== null ? m.integrated : Number.NaN))
    .filter(Number.isFinite);
  const integratedMedian = clean.length >= 3 ? median(clean) : Number.NaN;
  if (Number.isFinite(integratedMedian) && integratedMedian > 0)
    measurements.forEach((m, i) => {
      if (m.integrated !== null && m.integrated > o.aggregateFactor * integratedMedian)
        reasons[i].push("aggregate");
    });

  // Coverslip reference and depth.
  const into = o.intoSampleIsIncreasingZ;
  let coverslipSource: "user" | "estimated" | "default" = "user";
  let ref = o.coverslipSlice;
  if (ref === undefined) {
    const accepted = measurements.filter((_, i) => reasons[i].length === 0).map((m) => m.zPx);
    const pool = accepted.length > 0 ? accepted : measurements.filter((m) => !m.edge).map((m) => m.zPx);
    const p = into ? o.coverslipPercentile / 100 : 1 - o.coverslipPercentile / 100;
    ref = pool.length > 0 ? quantile(pool, p) : into ? 0 : nz - 1;
    coverslipSource = pool.length > 0 ? "estimated" : "default";
  }
  const toActual = o.nominalToActualDepth ?? ((v: number) => v);
  const raw: BeadResult[] = measurements.map((m, i) => {
    const apparentDepthUm = (m.zPx - ref!) * vs.z * (into ? 1 : -1);
    const { edge: _e, saturated: _s, fitFailed: _f, widthAtBound: _w, fitReasons: _r, ...rest } = m;
    const depth = toActual(apparentDepthUm);
    return {
      id: i + 1,
      ...rest,
      xUm: m.xPx * vs.x,
      yUm: m.yPx * vs.y,
      zUm: m.zPx * vs.z,
      depthUm: Number.isFinite(depth) ? depth : apparentDepthUm,
      apparentDepthUm,
      r2: m.r2X !== null && m.r2Y !== null && m.r2Z !== null ? Math.min(m.r2X, m.r2Y, m.r2Z) : null,
      included: reasons[i].length === 0,
      rejectReason: reasons[i][0] ?? null,
      rejectReasons: reasons[i],
    };
  });
  const beads = applyInclusion(raw, o.excludedBeadIds, o.includedOverrides);
  progress?.("aggregating", 0.3);
  const summary = summarizeBeads(beads, { beadDiameterNm: o.beadDiameterNm, beadLabel: o.beadLabel });
  const profile = depthProfile(beads, {
    minBeadsPerBin: o.minBeadsPerBin,
    maxDepthBins: o.maxDepthBins,
    beadDiameterNm: o.beadDiameterNm,
    beadLabel: o.beadLabel,
  });
  const trend = depthTrend(beads);
  progress?.("aggregating", 0.5);
  const avg = o.averagePsf
    ? averagePsf(stack, beads, {
        halfSizeUm: {
          lateral: 3 * o.expectedFwhmUm.lateral,
          axial: 4 * Math.max(o.expectedFwhmUm.axial, summary.fwhmZ.medianUm ?? 0),
        },
        farIsIncreasingZ: into,
        maxIterations: o.maxIterations1d,
      })
    : null;
  const field = fieldDependence(beads, {
    fieldWidthUm: nx * vs.x,
    fieldHeightUm: ny * vs.y,
    centralFraction: o.centralFraction,
    focusLayerThicknessUm: 2 * o.expectedFwhmUm.axial,
  });
  progress?.("aggregating", 1);
  const { onProgress: _p, nominalToActualDepth: _n, ...params } = o;
  return {
    beads,
    summary,
    depthProfile: profile,
    trend,
    averagedPsf: avg,
    field,
    provenance: {
      engineVersion: ENGINE_VERSION,
      parameters: {
        ...params,
        nominalToActualDepth: o.nominalToActualDepth ? "injected" : "identity",
        integratedMedian: Number.isFinite(integratedMedian) ? integratedMedian : null,
      },
      stack: {
        shape: [nz, ny, nx],
        dtype: stack.dtype,
        voxelSizeUm: { ...vs },
        backgroundMedian: bg.median,
        noiseSigma: bg.noiseSigma,
        backgroundMethod: bg.method,
        saturationLevel: o.saturationLevel,
        detectionThreshold: det.threshold,
        coverslipSlice: ref,
        coverslipSource,
      },
      candidatesAboveThreshold: det.candidatesAboveThreshold,
      candidatesMerged: det.merged,
    },
  };
}
