import type { BeadResult, RobustTrend } from "./analysis-types";
import { median } from "./quantile";
import { theilSen } from "./theil-sen";

/** Options of {@link coregisterChannels}. */
export interface CoregisterChannelsOptions {
  /** Maximum 3D distance (µm) for two beads to be the same object. */
  toleranceUm: number;
  /** Resolution in each direction (µm), e.g. the theoretical or measured FWHM of the reference channel. */
  resolutionUm: { lateral: number; axial: number };
  /** Use only included beads. @default true */
  includedOnly?: boolean;
}

/** One matched bead pair (reference → test), shifts in µm. */
export interface CoregistrationPair {
  referenceId: number;
  testId: number;
  dxUm: number;
  dyUm: number;
  dzUm: number;
  /** √(Δx² + Δy²) */
  lateralUm: number;
  /** |Δz| */
  axialUm: number;
  /** Depth of the reference bead (µm). */
  depthUm: number;
}

/** Result of {@link coregisterChannels}. */
export interface Coregistration {
  pairs: CoregistrationPair[];
  unmatchedReference: number;
  unmatchedTest: number;
  medianLateralUm: number | null;
  medianAxialUm: number | null;
  /** Median signed shifts (test − reference), µm. */
  medianDxUm: number | null;
  medianDyUm: number | null;
  medianDzUm: number | null;
  /** median shift / resolution in that direction (< 1 is the usual acceptance, QC-PRACTICE §2). */
  lateralRatio: number | null;
  axialRatio: number | null;
  lateralVsDepth: RobustTrend;
  axialVsDepth: RobustTrend;
  /** Signed axial shift vs depth: chromatic focal shift that grows with depth in dispersive media. */
  dzVsDepth: RobustTrend;
}

/**
 * Co-registration of two channels of the same bead stack: mutual-nearest-neighbour matching
 * within a tolerance, lateral √(Δx² + Δy²) and axial |Δz| shifts per pair, their medians, the
 * ratio to the resolution, and the trend with depth.
 *
 * @param reference - bead list of the reference channel (µm positions used)
 * @param test - bead list of the test channel
 * @param options - tolerance (µm), resolution (µm)
 * @returns pairs and summary (µm)
 * @throws RangeError when the tolerance or a resolution is not positive
 *
 * Notes: a pair is kept only when each bead is the other's nearest neighbour and the 3D
 * distance is within the tolerance, so one bead never pairs twice. O(n·m).
 * References: QC-PRACTICE.md §2 and §4.1 (ISO 21073 definitions as quoted there; ratio to resolution).
 * @example
 * coregisterChannels(green.beads, red.beads, { toleranceUm: 0.5, resolutionUm: { lateral: 0.25, axial: 0.7 } }).medianAxialUm;
 */
export function coregisterChannels(
  reference: readonly BeadResult[],
  test: readonly BeadResult[],
  options: CoregisterChannelsOptions,
): Coregistration {
  const { toleranceUm, resolutionUm, includedOnly = true } = options;
  if (!(toleranceUm > 0))
    throw new RangeError(`coregisterChannels: toleranceUm must be > 0; got ${toleranceUm}`);
  if (!(resolutionUm?.lateral > 0) || !(resolutionUm?.axial > 0))
    throw new RangeError(
      `coregisterChannels: resolutionUm.lateral and .axial must be > 0; got ${JSON.stringify(resolutionUm)}`,
    );
  const a = reference.filter((b) => !includedOnly || b.included);
  const b = test.filter((x) => !includedOnly || x.included);
  const dist = (p: BeadResult, q: BeadResult) => Math.hypot(p.xUm - q.xUm, p.yUm - q.yUm, p.zUm - q.zUm);
  const nearest = (p: BeadResult, list: readonly BeadResult[]) => {
    let best = -1;
    let bd = Infinity;
    for (let i = 0; i < list.length; i++) {
      const dd = dist(p, list[i]);
      if (dd < bd) {
        bd = dd;
        best = i;
      }
    }
    return { index: best, distance: bd };
  };
  const pairs: CoregistrationPair[] = [];
  for (let i = 0; i < a.length; i++) {
    const nb = nearest(a[i], b);
    if (nb.index < 0 || nb.distance > toleranceUm) continue;
    if (nearest(b[nb.index], a).index !== i) continue;
    const p = a[i];
    const q = b[nb.index];
    const dx = q.xUm - p.xUm;
    const dy = q.yUm - p.yUm;
    const dz = q.zUm - p.zUm;
    pairs.push({
      referenceId: p.id,
      testId: q.id,
      dxUm: dx,
      dyUm: dy,
      dzUm: dz,
      lateralUm: Math.hypot(dx, dy),
      axialUm: Math.abs(dz),
      depthUm: p.depthUm,
    });
  }
  const m = (f: (x: CoregistrationPair) => number) => {
    const v = median(pairs.map(f));
    return Number.isFinite(v) ? v : null;
  };
  const ml = m((x) => x.lateralUm);
  const ma = m((x) => x.axialUm);
  const depth = pairs.map((x) => x.depthUm);
  return {
    pairs,
    unmatchedReference: a.length - pairs.length,
    unmatchedTest: b.length - pairs.length,
    medianLateralUm: ml,
    medianAxialUm: ma,
    medianDxUm: m((x) => x.dxUm),
    medianDyUm: m((x) => x.dyUm),
    medianDzUm: m((x) => x.dzUm),
    lateralRatio: ml !== null ? ml / resolutionUm.lateral : null,
    axialRatio: ma !== null ? ma / resolutionUm.axial : null,
    lateralVsDepth: theilSen(
      depth,
      pairs.map((x) => x.lateralUm),
    ),
    axialVsDepth: theilSen(
      depth,
      pairs.map((x) => x.axialUm),
    ),
    dzVsDepth: theilSen(
      depth,
      pairs.map((x) => x.dzUm),
    ),
  };
}
