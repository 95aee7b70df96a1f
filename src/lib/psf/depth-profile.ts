import type { BeadResult, BinWidth, DepthProfileRow, DepthTrend } from "./analysis-types";
import { correctForBeadSize } from "./bead-size-correction";
import { median, quantileSorted, sortedFinite } from "./quantile";
import { theilSen } from "./theil-sen";

/** Options of {@link depthProfile}. */
export interface DepthProfileOptions {
  /** @default 5 */
  minBeadsPerBin?: number;
  /** @default 10 */
  maxDepthBins?: number;
  beadDiameterNm?: number;
  /** @default "solid" */
  beadLabel?: "solid" | "shell";
}

/**
 * Per-depth statistics of the included beads in bins of adaptive width (equal bead counts).
 *
 * @param beads - bead results (not mutated); only `included` beads with a finite depth are used
 * @param options - minimum beads per bin, maximum bins, bead size for the correction
 * @returns rows ordered by depth: range, median depth, count, median + quartiles of each width (µm)
 *
 * Notes: with n beads, k = clamp(⌊n / minBeadsPerBin⌋, 1, maxDepthBins) bins, each holding
 * ⌊n/k⌋ or ⌈n/k⌉ consecutive beads in depth order, so sparse depths get wide bins and dense
 * depths narrow ones. Medians are corrected for bead size where applicable (METHODS §7).
 * References: METHODS.md §8 (robust aggregation per depth bin); common practice.
 * @example
 * depthProfile(beads, { minBeadsPerBin: 5 }).length;
 */
export function depthProfile(
  beads: readonly BeadResult[],
  options: DepthProfileOptions = {},
): DepthProfileRow[] {
  const { minBeadsPerBin = 5, maxDepthBins = 10, beadDiameterNm, beadLabel = "solid" } = options;
  const used = beads
    .filter((b) => b.included && Number.isFinite(b.depthUm))
    .sort((a, b) => a.depthUm - b.depthUm);
  const n = used.length;
  if (n === 0) return [];
  const k = Math.min(maxDepthBins, Math.max(1, Math.floor(n / Math.max(1, minBeadsPerBin))));
  const rows: DepthProfileRow[] = [];
  for (let j = 0; j < k; j++) {
    const a = Math.round((j * n) / k);
    const b = Math.round(((j + 1) * n) / k);
    const bin = used.slice(a, b);
    if (bin.length === 0) continue;
    const w = (key: "fwhmXUm" | "fwhmYUm" | "fwhmZUm" | "fwhmZDirectUm"): BinWidth => {
      const s = sortedFinite(bin.map((x) => x[key] ?? Number.NaN));
      if (s.length === 0) return { medianUm: null, q1Um: null, q3Um: null, medianCorrectedUm: null };
      const m = quantileSorted(s, 0.5);
      return {
        medianUm: m,
        q1Um: quantileSorted(s, 0.25),
        q3Um: quantileSorted(s, 0.75),
        medianCorrectedUm:
          beadDiameterNm !== undefined ? correctForBeadSize(m, beadDiameterNm, beadLabel).correctedUm : null,
      };
    };
    const asym = median(bin.map((x) => x.axialAsymmetry ?? Number.NaN));
    rows.push({
      depthStartUm: bin[0].depthUm,
      depthEndUm: bin[bin.length - 1].depthUm,
      depthMedianUm: median(bin.map((x) => x.depthUm)),
      apparentDepthMedianUm: median(bin.map((x) => x.apparentDepthUm)),
      count: bin.length,
      fwhmX: w("fwhmXUm"),
      fwhmY: w("fwhmYUm"),
      fwhmZ: w("fwhmZUm"),
      fwhmZDirect: w("fwhmZDirectUm"),
      medianAxialAsymmetry: Number.isFinite(asym) ? asym : null,
    });
  }
  return rows;
}

/**
 * Robust linear trend (Theil–Sen, 95 % interval) of each width and of the axial asymmetry
 * against actual depth, over the included beads.
 *
 * @param beads - bead results (not mutated)
 * @returns slopes in µm of width per µm of depth (asymmetry: per µm)
 * References: Sen, JASA 63:1379 (1968) (from memory).
 * @example
 * depthTrend(beads).fwhmZ.slope; // µm/µm
 */
export function depthTrend(beads: readonly BeadResult[]): DepthTrend {
  const used = beads.filter((b) => b.included);
  const x = used.map((b) => b.depthUm);
  const t = (key: "fwhmXUm" | "fwhmYUm" | "fwhmZUm" | "fwhmZDirectUm" | "axialAsymmetry") =>
    theilSen(
      x,
      used.map((b) => b[key] ?? Number.NaN),
    );
  return {
    fwhmX: t("fwhmXUm"),
    fwhmY: t("fwhmYUm"),
    fwhmZ: t("fwhmZUm"),
    fwhmZDirect: t("fwhmZDirectUm"),
    axialAsymmetry: t("axialAsymmetry"),
  };
}
