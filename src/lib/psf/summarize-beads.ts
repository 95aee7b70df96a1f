import type {
  BeadResult,
  BeadSizeCorrection,
  PsfSummary,
  RejectReason,
  WidthStatistics,
} from "./analysis-types";
import { correctForBeadSize } from "./bead-size-correction";
import { median, quantileSorted, sortedFinite } from "./quantile";

/** Options of {@link summarizeBeads}. */
export interface SummarizeBeadsOptions {
  beadDiameterNm?: number;
  /** @default "solid" */
  beadLabel?: "solid" | "shell";
}

type WidthKey = "fwhmXUm" | "fwhmYUm" | "fwhmZUm" | "fwhmZDirectUm" | "fwhm3dXUm" | "fwhm3dYUm" | "fwhm3dZUm";
type UncKey =
  | "fwhmXUncertaintyUm"
  | "fwhmYUncertaintyUm"
  | "fwhmZUncertaintyUm"
  | "fwhm3dXUncertaintyUm"
  | "fwhm3dYUncertaintyUm"
  | "fwhm3dZUncertaintyUm";

/**
 * Summary of a bead list: counts (found / used / rejected by reason) and, over the included
 * beads, median, quartiles, IQR, range and uncertainty of each width, plus bead-size correction.
 *
 * @param beads - bead results (not mutated); `included` decides what enters the statistics
 * @param options - bead diameter (nm) and label for the correction
 * @returns plain summary object (widths in µm)
 *
 * Notes: robust statistics (median/IQR, METHODS §8 "median and MAD, not mean and SD").
 * Standard error of the median ≈ 1.2533·σ̂/√n with σ̂ = IQR/1.349 (normal approximation).
 * Bead-size correction by quadrature with 0.5265·d (solid) / 0.6798·d (shell), applied per
 * axis only when the bead term is < 0.5·median FWHM (METHODS §7); raw values are kept.
 * References: METHODS.md §7, §8; QC-PRACTICE.md §2 (median ratio per objective).
 * @example
 * summarizeBeads(beads).fwhmX.medianUm;
 */
export function summarizeBeads(
  beads: readonly BeadResult[],
  options: SummarizeBeadsOptions = {},
): PsfSummary {
  const { beadDiameterNm, beadLabel = "solid" } = options;
  const used = beads.filter((b) => b.included);
  const rejectedByReason: Partial<Record<RejectReason, number>> = {};
  for (const b of beads) {
    if (b.included) continue;
    const r: RejectReason = b.rejectReason ?? "user_excluded";
    rejectedByReason[r] = (rejectedByReason[r] ?? 0) + 1;
  }
  const corr = (m: number | null) =>
    beadDiameterNm !== undefined && m !== null ? correctForBeadSize(m, beadDiameterNm, beadLabel) : null;
  const stat = (key: WidthKey, unc: UncKey | null): WidthStatistics => widthStatistics(used, key, unc, corr);
  const fwhmX = stat("fwhmXUm", "fwhmXUncertaintyUm");
  const fwhmY = stat("fwhmYUm", "fwhmYUncertaintyUm");
  const fwhmZ = stat("fwhmZUm", "fwhmZUncertaintyUm");
  const beadSizeCorrection: BeadSizeCorrection = {
    beadDiameterNm: beadDiameterNm ?? null,
    beadLabel,
    beadFwhmUm: beadDiameterNm !== undefined ? (corr(1)?.beadFwhmUm ?? null) : null,
    appliedLateral: fwhmX.medianCorrectedUm !== null,
    appliedAxial: fwhmZ.medianCorrectedUm !== null,
  };
  const med = (f: (b: BeadResult) => number | null) => fin(median(used.map((b) => f(b) ?? Number.NaN)));
  return {
    found: beads.length,
    used: used.length,
    rejected: beads.length - used.length,
    rejectedByReason,
    fwhmX,
    fwhmY,
    fwhmZ,
    fwhmZDirect: stat("fwhmZDirectUm", null),
    fwhm3dX: stat("fwhm3dXUm", "fwhm3dXUncertaintyUm"),
    fwhm3dY: stat("fwhm3dYUm", "fwhm3dYUncertaintyUm"),
    fwhm3dZ: stat("fwhm3dZUm", "fwhm3dZUncertaintyUm"),
    medianLateralAsymmetry: med((b) => b.lateralAsymmetry),
    medianAxialAsymmetry: med((b) => b.axialAsymmetry),
    medianAxialSkewness: med((b) => b.axialSkewness),
    medianDriftUmPerUm: med((b) => b.driftUmPerUm),
    medianSnr: med((b) => b.snr),
    beadSizeCorrection,
  };
}

function fin(v: number): number | null {
  return Number.isFinite(v) ? v : null;
}

/** Median / quartiles / range / uncertainty of one width over the given beads (µm). */
export function widthStatistics(
  beads: readonly BeadResult[],
  key: WidthKey,
  unc: UncKey | null,
  corr: (m: number | null) => { correctedUm: number | null } | null = () => null,
): WidthStatistics {
  const s = sortedFinite(beads.map((b) => b[key] ?? Number.NaN));
  const n = s.length;
  if (n === 0)
    return {
      count: 0,
      medianUm: null,
      q1Um: null,
      q3Um: null,
      iqrUm: null,
      minUm: null,
      maxUm: null,
      medianFitUncertaintyUm: null,
      medianStandardErrorUm: null,
      medianCorrectedUm: null,
    };
  const q1 = quantileSorted(s, 0.25);
  const q3 = quantileSorted(s, 0.75);
  const m = quantileSorted(s, 0.5);
  return {
    count: n,
    medianUm: m,
    q1Um: q1,
    q3Um: q3,
    iqrUm: q3 - q1,
    minUm: s[0],
    maxUm: s[n - 1],
    medianFitUncertaintyUm: unc ? fin(median(beads.map((b) => b[unc] ?? Number.NaN))) : null,
    medianStandardErrorUm: n >= 2 ? (1.2533 * ((q3 - q1) / 1.349)) / Math.sqrt(n) : null,
    medianCorrectedUm: corr(m)?.correctedUm ?? null,
  };
}
