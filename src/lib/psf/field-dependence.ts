import { Matrix, solve } from "ml-matrix";
import type { BeadResult, FieldDependence, FocusSurface, RegionStatistics } from "./analysis-types";
import { median } from "./quantile";
import { theilSen } from "./theil-sen";

/** Options of {@link fieldDependence}. */
export interface FieldDependenceOptions {
  /** Field extent (µm): the stack's nx·Δx and ny·Δy. */
  fieldWidthUm: number;
  fieldHeightUm: number;
  /** Central region radius as a fraction of the field radius. @default 0.5 */
  centralFraction?: number;
  /** Beads with apparent depth ≤ this (µm) form the coverslip layer used for the focus surface. */
  focusLayerThicknessUm: number;
}

/**
 * Field dependence of the PSF: central vs full-field statistics, widths and lateral
 * asymmetry against radius, and the best-focus surface (plane → tilt, quadratic → curvature)
 * with its planarity.
 *
 * @param beads - bead results (not mutated); included beads only are used
 * @param options - field size (µm), central fraction, coverslip-layer thickness (µm)
 * @returns plain object; surfaces in µm with x, y measured from the field centre (µm)
 *
 * Notes: field radius R = half-diagonal; central = r ≤ centralFraction·R. Best focus = each
 * bead's apparent axial centre zUm (nominal), for beads within the coverslip layer (beads at
 * different depths would otherwise read as curvature). Plane z = c0 + c1x + c2y; quadratic adds
 * c3x² + c4xy + c5y². Reported only with ≥ 3 beads per coefficient (plane 9, quadratic 18); otherwise
 * the surface is null with its bead count. Least squares by normal equations.
 * Planarity = max − min (and RMS about the mean) of the fitted surface on a 21×21 grid over the
 * field rectangle.
 * References: QC-PRACTICE.md §4.2 (best-focus surface, tilt, curvature, planarity; central vs
 * full-field statistics).
 * @example
 * fieldDependence(beads, { fieldWidthUm: 33, fieldHeightUm: 33, focusLayerThicknessUm: 1.4 }).plane.tiltUmPerUm;
 */
export function fieldDependence(
  beads: readonly BeadResult[],
  options: FieldDependenceOptions,
): FieldDependence {
  const { fieldWidthUm, fieldHeightUm, centralFraction = 0.5, focusLayerThicknessUm } = options;
  const cxu = fieldWidthUm / 2;
  const cyu = fieldHeightUm / 2;
  const R = Math.hypot(cxu, cyu);
  const used = beads.filter((b) => b.included);
  const r = used.map((b) => Math.hypot(b.xUm - cxu, b.yUm - cyu));
  const central = used.filter((_, i) => r[i] <= centralFraction * R);
  const layer = used.filter(
    (b) => Number.isFinite(b.apparentDepthUm) && b.apparentDepthUm <= focusLayerThicknessUm,
  );
  const px = layer.map((b) => b.xUm - cxu);
  const py = layer.map((b) => b.yUm - cyu);
  const pz = layer.map((b) => b.zUm);
  return {
    centreXUm: cxu,
    centreYUm: cyu,
    fieldRadiusUm: R,
    centralFraction,
    central: regionStats(central),
    full: regionStats(used),
    fwhmXVsRadius: theilSen(
      r,
      used.map((b) => b.fwhmXUm ?? Number.NaN),
    ),
    fwhmYVsRadius: theilSen(
      r,
      used.map((b) => b.fwhmYUm ?? Number.NaN),
    ),
    fwhmZVsRadius: theilSen(
      r,
      used.map((b) => b.fwhmZUm ?? Number.NaN),
    ),
    lateralAsymmetryVsRadius: theilSen(
      r,
      used.map((b) => b.lateralAsymmetry ?? Number.NaN),
    ),
    focusLayerThicknessUm,
    plane:
      px.length >= BEADS_PER_COEFFICIENT * 3 ? fitSurface(px, py, pz, false, cxu, cyu) : noSurface(px.length),
    quadratic:
      px.length >= BEADS_PER_COEFFICIENT * 6 ? fitSurface(px, py, pz, true, cxu, cyu) : noSurface(px.length),
  };
}

/**
 * Beads needed per surface coefficient before a fitted surface is reported. Planarity is the
 * surface's peak-to-valley over the whole field, so a surface fitted to a handful of beads
 * extrapolates their depth scatter into the corners: 10 beads in a 1.4 µm layer gave a
 * "curved" planarity of 14 µm. Three per coefficient (9 for the plane, 18 for the quadratic)
 * is our rule of thumb (common practice for least squares: several points per parameter).
 */
const BEADS_PER_COEFFICIENT = 3;

/** A surface too few beads support: only its bead count. */
function noSurface(n: number): FocusSurface {
  return {
    n,
    coefficients: null,
    tiltUmPerUm: null,
    planarityPeakToValleyUm: null,
    planarityRmsUm: null,
    residualRmsUm: null,
  };
}

function regionStats(b: readonly BeadResult[]): RegionStatistics {
  const m = (f: (x: BeadResult) => number | null) => {
    const v = median(b.map((x) => f(x) ?? Number.NaN));
    return Number.isFinite(v) ? v : null;
  };
  return {
    count: b.length,
    medianFwhmXUm: m((x) => x.fwhmXUm),
    medianFwhmYUm: m((x) => x.fwhmYUm),
    medianFwhmZUm: m((x) => x.fwhmZUm),
    medianLateralAsymmetry: m((x) => x.lateralAsymmetry),
  };
}

/** Least-squares plane or quadratic z(x, y) through the points, with planarity over the field rectangle. */
export function fitSurface(
  x: number[],
  y: number[],
  z: number[],
  quadratic: boolean,
  halfW: number,
  halfH: number,
): FocusSurface {
  const n = x.length;
  const p = quadratic ? 6 : 3;
  const empty = noSurface(n);
  if (n < p + (quadratic ? 1 : 0)) return empty;
  const basis = (u: number, v: number) => (quadratic ? [1, u, v, u * u, u * v, v * v] : [1, u, v]);
  const rows = x.map((u, i) => basis(u, y[i]));
  let coef: number[];
  try {
    const A = new Matrix(rows);
    const At = A.transpose();
    coef = solve(At.mmul(A), At.mmul(Matrix.columnVector(z))).getColumn(0);
  } catch {
    return empty;
  }
  if (!coef.every(Number.isFinite)) return empty;
  const ev = (u: number, v: number) => basis(u, v).reduce((s, b, k) => s + b * coef[k], 0);
  let res = 0;
  for (let i = 0; i < n; i++) res += (z[i] - ev(x[i], y[i])) ** 2;
  let lo = Infinity;
  let hi = -Infinity;
  let s = 0;
  let s2 = 0;
  const G = 21;
  for (let i = 0; i < G; i++)
    for (let j = 0; j < G; j++) {
      const v = ev(-halfW + (2 * halfW * i) / (G - 1), -halfH + (2 * halfH * j) / (G - 1));
      lo = Math.min(lo, v);
      hi = Math.max(hi, v);
      s += v;
      s2 += v * v;
    }
  const mean = s / (G * G);
  return {
    n,
    coefficients: coef,
    tiltUmPerUm: Math.hypot(coef[1], coef[2]),
    planarityPeakToValleyUm: hi - lo,
    planarityRmsUm: Math.sqrt(Math.max(0, s2 / (G * G) - mean * mean)),
    residualRmsUm: Math.sqrt(res / n),
  };
}
