import { checkPositive } from "./check-optics-inputs";
import { nyquistSampling } from "./nyquist-sampling";
import { theoreticalFwhm, type Modality } from "./theoretical-fwhm";

/** Verdict on one sampling interval relative to Nyquist. */
export type SamplingVerdict = "ok" | "coarse" | "far too coarse";

/** One axis of a {@link checkSampling} result. */
export interface SamplingAxisCheck {
  /** Voxel size used, nm. */
  voxelNm: number;
  /** Nyquist interval, nm. */
  nyquistNm: number;
  /** voxel / Nyquist (≤ 1 means at or finer than Nyquist). */
  nyquistRatio: number;
  /** ok: ratio ≤ 1; coarse: ≤ 2; far too coarse: > 2 (product convention). */
  verdict: SamplingVerdict;
  /** Theoretical FWHM along this axis, nm. */
  theoreticalFwhmNm: number;
  /** Samples across the theoretical FWHM. */
  samplesAcrossFwhm: number;
  /** Gaussian-fitting rule: ≥ 3 pixels laterally, ≥ 5 planes axially across the FWHM (common practice). */
  enoughForFitting: boolean;
}

/** Result of {@link checkSampling}. */
export interface SamplingCheck {
  lateral: SamplingAxisCheck;
  axial: SamplingAxisCheck;
  /** Worst of the two verdicts. */
  verdict: SamplingVerdict;
  /** Plain-language explanation. */
  message: string;
}

/** Minimum lateral pixels across the FWHM for a Gaussian fit (common practice: 3–4). */
export const MIN_PIXELS_ACROSS_LATERAL_FWHM = 3;
/** Minimum z-planes across the axial FWHM for a Gaussian fit (common practice). */
export const MIN_PLANES_ACROSS_AXIAL_FWHM = 5;

function verdictOf(ratio: number): SamplingVerdict {
  if (ratio <= 1) return "ok";
  if (ratio <= 2) return "coarse";
  return "far too coarse";
}

/**
 * Check a voxel size against Nyquist and against the bead-fitting rule of thumb.
 *
 * Notes: the Nyquist ratio is voxel/Nyquist per axis (see {@link nyquistSampling}); the verdict
 * thresholds 1 and 2 are a product convention. The fitting rule (≥ 3–4 px across the lateral
 * FWHM, ≥ 5 planes across the axial FWHM) is common practice; the lateral check uses 3.
 * Use the *actual* z-step (nominal × axial scaling factor) when the sample RI differs from the
 * immersion RI.
 *
 * References: METHODS.md §6 (Heintzmann & Sheppard 2007; Pawley 2006 p. 64; fitting rule common
 * practice).
 *
 * @param options.voxelSizeUm - voxel size, µm (x, y lateral; z step)
 * @returns per-axis ratios, verdicts and the fitting-rule flags
 * @throws RangeError for non-positive voxel sizes or invalid optics
 * @example checkSampling({ modality: "widefield", na: 1.4, immersionRi: 1.518, emissionWavelengthNm: 520, voxelSizeUm: { x: 0.065, y: 0.065, z: 0.2 } })
 */
export function checkSampling(options: {
  modality: Modality;
  na: number;
  immersionRi: number;
  emissionWavelengthNm: number;
  excitationWavelengthNm?: number;
  pinholeAu?: number;
  voxelSizeUm: { x: number; y: number; z: number };
}): SamplingCheck {
  const { voxelSizeUm, ...optics } = options;
  checkPositive("voxelSizeUm.x", voxelSizeUm.x);
  checkPositive("voxelSizeUm.y", voxelSizeUm.y);
  checkPositive("voxelSizeUm.z", voxelSizeUm.z);
  const nyquist = nyquistSampling(optics);
  const theory = theoreticalFwhm(optics);
  const lateralVoxelNm = Math.max(voxelSizeUm.x, voxelSizeUm.y) * 1000;
  const axialVoxelNm = voxelSizeUm.z * 1000;
  const axis = (
    voxelNm: number,
    nyquistNm: number,
    fwhmNm: number,
    minSamples: number,
  ): SamplingAxisCheck => {
    const nyquistRatio = voxelNm / nyquistNm;
    const samplesAcrossFwhm = fwhmNm / voxelNm;
    return {
      voxelNm,
      nyquistNm,
      nyquistRatio,
      verdict: verdictOf(nyquistRatio),
      theoreticalFwhmNm: fwhmNm,
      samplesAcrossFwhm,
      enoughForFitting: samplesAcrossFwhm >= minSamples,
    };
  };
  const lateral = axis(lateralVoxelNm, nyquist.lateralNm, theory.lateralNm, MIN_PIXELS_ACROSS_LATERAL_FWHM);
  const axial = axis(axialVoxelNm, nyquist.axialNm, theory.axialNm, MIN_PLANES_ACROSS_AXIAL_FWHM);
  const order: SamplingVerdict[] = ["ok", "coarse", "far too coarse"];
  const verdict = order[Math.max(order.indexOf(lateral.verdict), order.indexOf(axial.verdict))];
  const message =
    `Pixel ${lateral.voxelNm.toFixed(0)} nm is ${lateral.nyquistRatio.toFixed(2)}× Nyquist (${lateral.nyquistNm.toFixed(1)} nm), ` +
    `${lateral.samplesAcrossFwhm.toFixed(1)} px across the lateral FWHM; z-step ${axial.voxelNm.toFixed(0)} nm is ` +
    `${axial.nyquistRatio.toFixed(2)}× Nyquist (${axial.nyquistNm.toFixed(1)} nm), ${axial.samplesAcrossFwhm.toFixed(1)} planes across the axial FWHM.` +
    (lateral.enoughForFitting && axial.enoughForFitting
      ? ""
      : " Too few samples across the PSF for a reliable Gaussian fit.");
  return { lateral, axial, verdict, message };
}
