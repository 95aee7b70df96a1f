import type { Stack } from "../tiff/stack";
import type { BeadResult, FitStopReason } from "./analysis-types";
import { axialAsymmetry } from "./axial-asymmetry";
import { FWHM_PER_SIGMA } from "./engine-version";
import { fitGaussian1d, type Gaussian1dFit } from "./fit-gaussian-1d";
import { fitGaussian3d } from "./fit-gaussian-3d";
import { halfMaximumWidth } from "./half-maximum-width";
import { median } from "./quantile";

/** Options of {@link measureBead} (all resolved; see `resolveAnalyzeOptions`). */
export interface MeasureBeadOptions {
  expectedFwhmUm: { lateral: number; axial: number };
  /** Lateral fit half-window in expected lateral FWHM (METHODS §8: 1.5–2). */
  lateralWindowFwhm: number;
  /** Axial fit half-window in axial FWHM (METHODS §8: ±1.5 or the central lobe). */
  axialWindowFwhm: number;
  /** Half-extent in axial FWHM that must lie inside the stack (else `edge`). @default 2 */
  edgeAxialFwhm?: number;
  saturationLevel: number;
  /** Stack background (counts) used when the fits give none, and the noise σ for the SNR. */
  stackBackground: number;
  noiseSigma: number;
  farIsIncreasingZ: boolean;
  fit3d: boolean;
  fit3dRotation: boolean;
  maxIterations1d: number;
  maxIterations3d: number;
}

/** Fields of a {@link BeadResult} that `analyzeStack` adds after measuring: identity, µm positions, depth, r², inclusion. */
type DerivedBeadField =
  | "id"
  | "xUm"
  | "yUm"
  | "zUm"
  | "depthUm"
  | "apparentDepthUm"
  | "r2"
  | "included"
  | "rejectReason"
  | "rejectReasons";

/**
 * Everything measured on one bead, before the accept/reject decision: the measured fields of
 * the bead row (documented on {@link BeadResult}, widths in µm) and the flags the decision reads.
 */
export interface BeadMeasurement extends Omit<BeadResult, DerivedBeadField> {
  edge: boolean;
  saturated: boolean;
  /** A 1D fit failed outright (non-finite, singular, too few points, no amplitude). */
  fitFailed: boolean;
  /** A 1D σ ended at its bound. */
  widthAtBound: boolean;
  fitReasons: {
    x: FitStopReason | null;
    y: FitStopReason | null;
    z: FitStopReason | null;
    xyz: FitStopReason | null;
  };
}

const fin = (v: number): number | null => (Number.isFinite(v) ? v : null);

/**
 * Measure one bead around a detected position: 1D Gaussian + offset fits of the x, y, z
 * profiles through the refined centre, the direct axial half-maximum width, a 3D Gaussian
 * fit, shape figures (lateral asymmetry, axial side-lobe ratio, skewness, energy ratio,
 * centroid drift), peak and integrated intensity, and the edge/saturation flags. Local background = mean offset of the x and y fits.
 *
 * @param stack - shape [z, y, x] with voxel size (not mutated)
 * @param position - detected centre in voxels (sub-voxel)
 * @param options - resolved windows, levels and fit settings
 * @returns the measurement; widths in µm, levels in counts, nulls where not measurable
 *
 * Notes: windows are sized from the expected FWHM laterally (±lateralWindowFwhm·FWHM) and from
 * the bead's own axial half-maximum width axially (±axialWindowFwhm·FWHM, so a depth-broadened
 * PSF still gets its central lobe), never from fixed voxel counts. Profiles are taken through
 * the voxel nearest the centre; when the fitted centre rounds to another voxel the profiles are
 * re-taken and re-fitted once. FWHM = 2√(2 ln 2)·σ·voxel size. Uncertainties are one-sigma,
 * from cov = s²(JᵀJ)⁻¹ at the optimum. The asymmetry window is ±4 axial FWHM (METHODS §8),
 * clipped to the stack. Drift: weighted least-squares slope of the per-plane lateral centroid
 * against z within ±1.5 axial FWHM.
 * References: METHODS.md §8 (windows, background term, 1D vs 3D, side-lobe ratio).
 * @example
 * measureBead(stack, { x: 100.2, y: 50.7, z: 40.1 }, options).fwhmXUm;
 */
export function measureBead(
  stack: Stack,
  position: { x: number; y: number; z: number },
  options: MeasureBeadOptions,
): BeadMeasurement {
  const {
    expectedFwhmUm,
    lateralWindowFwhm,
    axialWindowFwhm,
    edgeAxialFwhm = 2,
    saturationLevel,
    stackBackground,
    noiseSigma,
  } = options;
  const vs = stack.voxelSizeUm!;
  const [nz, ny, nx] = stack.shape;
  const d = stack.data;
  const at = (z: number, y: number, x: number) => d[(z * ny + y) * nx + x];
  let cx = clampInt(position.x, nx);
  let cy = clampInt(position.y, ny);
  let cz = clampInt(position.z, nz);
  const hx = Math.max(2, Math.ceil((lateralWindowFwhm * expectedFwhmUm.lateral) / vs.x));
  const hy = Math.max(2, Math.ceil((lateralWindowFwhm * expectedFwhmUm.lateral) / vs.y));
  const hzEdge = Math.max(2, Math.ceil((edgeAxialFwhm * expectedFwhmUm.axial) / vs.z));
  const sx = Math.max(1, Math.ceil(expectedFwhmUm.lateral / vs.x));
  const sy = Math.max(1, Math.ceil(expectedFwhmUm.lateral / vs.y));
  const sz = Math.max(1, Math.ceil(expectedFwhmUm.axial / vs.z));

  // Peak and saturation within ±1 expected FWHM.
  let peak = -Infinity;
  for (let z = Math.max(0, cz - sz); z <= Math.min(nz - 1, cz + sz); z++)
    for (let y = Math.max(0, cy - sy); y <= Math.min(ny - 1, cy + sy); y++)
      for (let x = Math.max(0, cx - sx); x <= Math.min(nx - 1, cx + sx); x++)
        peak = Math.max(peak, at(z, y, x));
  const saturated = peak >= saturationLevel;
  const edge =
    cx - hx < 0 ||
    cx + hx > nx - 1 ||
    cy - hy < 0 ||
    cy + hy > ny - 1 ||
    cz - hzEdge < 0 ||
    cz + hzEdge > nz - 1;

  const out: BeadMeasurement = {
    xPx: position.x,
    yPx: position.y,
    zPx: position.z,
    edge,
    saturated,
    fitFailed: false,
    widthAtBound: false,
    fwhmXUm: null,
    fwhmYUm: null,
    fwhmZUm: null,
    fwhmXUncertaintyUm: null,
    fwhmYUncertaintyUm: null,
    fwhmZUncertaintyUm: null,
    fwhmZDirectUm: null,
    fwhm3dXUm: null,
    fwhm3dYUm: null,
    fwhm3dZUm: null,
    fwhm3dXUncertaintyUm: null,
    fwhm3dYUncertaintyUm: null,
    fwhm3dZUncertaintyUm: null,
    rotation3dRad: null,
    amplitude: null,
    background: null,
    snr: null,
    r2X: null,
    r2Y: null,
    r2Z: null,
    r23d: null,
    axialAsymmetry: null,
    axialSkewness: null,
    axialEnergyRatio: null,
    lateralAsymmetry: null,
    driftUmPerUm: null,
    peak,
    integrated: null,
    fitConverged: { x: false, y: false, z: false, xyz: false },
    fitReasons: { x: null, y: null, z: null, xyz: null },
  };
  if (edge) return out;

  // On-axis profile over the widest axial range the stack allows (≤ ±6 expected FWHM), to size the axial window.
  const hzWide = Math.ceil((6 * expectedFwhmUm.axial) / vs.z);
  const fitAll = (): { fx: Gaussian1dFit; fy: Gaussian1dFit; fz: Gaussian1dFit; hz: number; bg: number } => {
    const fx = fitLine(stack, "x", cz, cy, cx, cx - hx, cx + hx, options.maxIterations1d);
    const fy = fitLine(stack, "y", cz, cy, cx, cy - hy, cy + hy, options.maxIterations1d);
    const bgLat =
      Number.isFinite(fx.background) && Number.isFinite(fy.background)
        ? 0.5 * (fx.background + fy.background)
        : stackBackground;
    const z0 = Math.max(0, cz - hzWide);
    const z1 = Math.min(nz - 1, cz + hzWide);
    const wide = new Float64Array(z1 - z0 + 1);
    for (let z = z0; z <= z1; z++) wide[z - z0] = at(z, cy, cx);
    const hm = halfMaximumWidth(wide, bgLat, cz - z0);
    const fwhmAxUm = hm.width !== null ? hm.width * vs.z : expectedFwhmUm.axial;
    const axialUsed = Math.min(Math.max(fwhmAxUm, expectedFwhmUm.axial), 4 * expectedFwhmUm.axial);
    const hz = Math.max(2, Math.ceil((axialWindowFwhm * axialUsed) / vs.z));
    const fz = fitLine(stack, "z", cz, cy, cx, cz - hz, cz + hz, options.maxIterations1d);
    return { fx, fy, fz, hz, bg: bgLat };
  };
  let f = fitAll();
  const nx0 = clampInt(f.fx.centre, nx);
  const ny0 = clampInt(f.fy.centre, ny);
  const nz0 = clampInt(f.fz.centre, nz);
  if (
    (nx0 !== cx || ny0 !== cy || nz0 !== cz) &&
    Number.isFinite(f.fx.centre + f.fy.centre + f.fz.centre) &&
    Math.abs(nx0 - cx) <= hx / 2 &&
    Math.abs(ny0 - cy) <= hy / 2 &&
    Math.abs(nz0 - cz) <= f.hz / 2
  ) {
    cx = nx0;
    cy = ny0;
    cz = nz0;
    if (!(cx - hx < 0 || cx + hx > nx - 1 || cy - hy < 0 || cy + hy > ny - 1)) f = fitAll();
  }
  const { fx, fy, fz } = f;
  const failed = (g: Gaussian1dFit) =>
    g.reason === "non_finite" ||
    g.reason === "singular" ||
    g.reason === "too_few_points" ||
    !(g.amplitude > 0);
  out.fitFailed = failed(fx) || failed(fy) || failed(fz);
  out.widthAtBound = fx.sigmaAtBound || fy.sigmaAtBound || fz.sigmaAtBound;
  out.fitConverged = { x: fx.converged, y: fy.converged, z: fz.converged, xyz: false };
  out.fitReasons = { x: fx.reason, y: fy.reason, z: fz.reason, xyz: null };
  out.xPx = Number.isFinite(fx.centre) ? fx.centre : position.x;
  out.yPx = Number.isFinite(fy.centre) ? fy.centre : position.y;
  out.zPx = Number.isFinite(fz.centre) ? fz.centre : position.z;
  out.fwhmXUm = fin(FWHM_PER_SIGMA * fx.sigma * vs.x);
  out.fwhmYUm = fin(FWHM_PER_SIGMA * fy.sigma * vs.y);
  out.fwhmZUm = fin(FWHM_PER_SIGMA * fz.sigma * vs.z);
  out.fwhmXUncertaintyUm = fin(FWHM_PER_SIGMA * fx.sigmaSe * vs.x);
  out.fwhmYUncertaintyUm = fin(FWHM_PER_SIGMA * fy.sigmaSe * vs.y);
  out.fwhmZUncertaintyUm = fin(FWHM_PER_SIGMA * fz.sigmaSe * vs.z);
  out.r2X = fin(fx.r2);
  out.r2Y = fin(fy.r2);
  out.r2Z = fin(fz.r2);
  out.amplitude = fin(median([fx.amplitude, fy.amplitude, fz.amplitude]));
  // Lateral fit offsets: their ±2 FWHM windows reach the background; the axial offset can sit on side
  // lobes and the 3D offset is pulled down by a non-separable (aberrated) PSF.
  const bgLat = 0.5 * (fx.background + fy.background);
  const bg = Number.isFinite(bgLat) ? bgLat : stackBackground;
  out.snr = out.amplitude !== null && noiseSigma > 0 ? out.amplitude / noiseSigma : null;
  if (out.fwhmXUm !== null && out.fwhmYUm !== null && out.fwhmXUm > 0 && out.fwhmYUm > 0)
    out.lateralAsymmetry = Math.min(out.fwhmXUm, out.fwhmYUm) / Math.max(out.fwhmXUm, out.fwhmYUm);

  const axialFwhmUm = Math.min(
    Math.max(out.fwhmZUm ?? expectedFwhmUm.axial, expectedFwhmUm.axial),
    4 * expectedFwhmUm.axial,
  );

  // 3D fit on the ellipsoid of semi-axes 1.5 FWHM (lateral expected, axial measured), clipped to the stack.
  if (options.fit3d && !out.fitFailed) {
    const wx = Math.max(2, Math.ceil((1.5 * expectedFwhmUm.lateral) / vs.x));
    const wy = Math.max(2, Math.ceil((1.5 * expectedFwhmUm.lateral) / vs.y));
    const wz = Math.max(2, Math.ceil((1.5 * axialFwhmUm) / vs.z));
    const x0 = Math.max(0, cx - wx);
    const y0 = Math.max(0, cy - wy);
    const z0 = Math.max(0, cz - wz);
    const x1 = Math.min(nx - 1, cx + wx);
    const y1 = Math.min(ny - 1, cy + wy);
    const z1 = Math.min(nz - 1, cz + wz);
    const shape: [number, number, number] = [z1 - z0 + 1, y1 - y0 + 1, x1 - x0 + 1];
    const win = new Float64Array(shape[0] * shape[1] * shape[2]);
    let k = 0;
    for (let z = z0; z <= z1; z++)
      for (let y = y0; y <= y1; y++) for (let x = x0; x <= x1; x++) win[k++] = at(z, y, x);
    const g = fitGaussian3d(
      { data: win, shape, voxelSizeUm: vs },
      {
        rotation: options.fit3dRotation,
        maxIterations: options.maxIterations3d,
        ellipsoidal: true,
        seed: {
          background: bg,
          amplitude: out.amplitude ?? undefined,
          x: (out.xPx - x0) * vs.x,
          y: (out.yPx - y0) * vs.y,
          z: (out.zPx - z0) * vs.z,
          sigmaX: (out.fwhmXUm ?? expectedFwhmUm.lateral) / FWHM_PER_SIGMA,
          sigmaY: (out.fwhmYUm ?? expectedFwhmUm.lateral) / FWHM_PER_SIGMA,
          sigmaZ: axialFwhmUm / FWHM_PER_SIGMA,
        },
      },
    );
    out.fitConverged.xyz = g.converged;
    out.fitReasons.xyz = g.reason;
    if (Number.isFinite(g.sigmaX) && g.reason !== "non_finite") {
      out.fwhm3dXUm = fin(FWHM_PER_SIGMA * g.sigmaX);
      out.fwhm3dYUm = fin(FWHM_PER_SIGMA * g.sigmaY);
      out.fwhm3dZUm = fin(FWHM_PER_SIGMA * g.sigmaZ);
      out.fwhm3dXUncertaintyUm = fin(FWHM_PER_SIGMA * g.sigmaXSe);
      out.fwhm3dYUncertaintyUm = fin(FWHM_PER_SIGMA * g.sigmaYSe);
      out.fwhm3dZUncertaintyUm = fin(FWHM_PER_SIGMA * g.sigmaZSe);
      out.rotation3dRad = g.theta;
      out.r23d = fin(g.r2);
    }
  }
  out.background = bg;

  // Direct half-maximum axial width and asymmetry over ±4 axial FWHM.
  const ha = Math.max(3, Math.ceil((4 * axialFwhmUm) / vs.z));
  const za = Math.max(0, cz - ha);
  const zb = Math.min(nz - 1, cz + ha);
  const line = new Float64Array(zb - za + 1);
  const onAxis = new Float64Array(zb - za + 1);
  const energy = new Float64Array(zb - za + 1);
  const lx0 = cx - hx;
  const lx1 = cx + hx;
  const ly0 = cy - hy;
  const ly1 = cy + hy;
  const latCount = (lx1 - lx0 + 1) * (ly1 - ly0 + 1);
  // Per-plane lateral centroid for the drift.
  const cenX = new Float64Array(line.length);
  const cenY = new Float64Array(line.length);
  for (let z = za; z <= zb; z++) {
    const i = z - za;
    line[i] = at(z, cy, cx);
    let s3 = 0;
    for (let y = cy - 1; y <= cy + 1; y++) for (let x = cx - 1; x <= cx + 1; x++) s3 += at(z, y, x);
    onAxis[i] = s3 / 9 - bg;
    let e = 0;
    let ex = 0;
    let ey = 0;
    let ep = 0;
    for (let y = ly0; y <= ly1; y++) {
      const ro = (z * ny + y) * nx;
      for (let x = lx0; x <= lx1; x++) {
        const v = d[ro + x] - bg;
        e += v;
        if (v > 0) {
          ep += v;
          ex += v * x;
          ey += v * y;
        }
      }
    }
    energy[i] = e;
    cenX[i] = ep > 0 ? ex / ep : Number.NaN;
    cenY[i] = ep > 0 ? ey / ep : Number.NaN;
    void latCount;
  }
  const zc = out.zPx - za;
  const hm = halfMaximumWidth(line, bg, zc);
  out.fwhmZDirectUm = hm.width !== null ? hm.width * vs.z : null;
  const asym = axialAsymmetry(
    onAxis,
    energy,
    Math.min(line.length - 1, Math.max(0, zc)),
    options.farIsIncreasingZ,
  );
  out.axialAsymmetry = asym.sideLobeRatio;
  out.axialSkewness = asym.skewness;
  out.axialEnergyRatio = asym.energyRatio;

  // Drift: weighted slope of centroid vs z within ±1.5 axial FWHM.
  const hd = (1.5 * axialFwhmUm) / vs.z;
  let sw = 0;
  let swz = 0;
  let swzz = 0;
  let swx = 0;
  let swy = 0;
  let swzx = 0;
  let swzy = 0;
  for (let i = 0; i < line.length; i++) {
    const z = za + i;
    if (Math.abs(z - out.zPx) > hd || !Number.isFinite(cenX[i]) || !(energy[i] > 0)) continue;
    const w = energy[i];
    const zu = z * vs.z;
    const xu = cenX[i] * vs.x;
    const yu = cenY[i] * vs.y;
    sw += w;
    swz += w * zu;
    swzz += w * zu * zu;
    swx += w * xu;
    swy += w * yu;
    swzx += w * zu * xu;
    swzy += w * zu * yu;
  }
  const den = sw * swzz - swz * swz;
  if (sw > 0 && den > 1e-12 * sw * sw) {
    const bx = (sw * swzx - swz * swx) / den;
    const by = (sw * swzy - swz * swy) / den;
    out.driftUmPerUm = Math.hypot(bx, by);
  }

  // Integrated intensity in a fixed window (±lateralWindowFwhm lateral, ±2 expected axial FWHM).
  let integ = 0;
  for (let z = cz - hzEdge; z <= cz + hzEdge; z++) {
    if (z < 0 || z >= nz) continue;
    for (let y = ly0; y <= ly1; y++) {
      const ro = (z * ny + y) * nx;
      for (let x = lx0; x <= lx1; x++) integ += d[ro + x] - bg;
    }
  }
  out.integrated = integ;
  return out;
}

function clampInt(v: number, n: number): number {
  return Math.min(n - 1, Math.max(0, Math.round(v)));
}

/** Fit a 1D Gaussian to the line along `axis` through (cz, cy, cx) over [i0, i1] (clipped); positions in voxels. */
function fitLine(
  stack: Stack,
  axis: "x" | "y" | "z",
  cz: number,
  cy: number,
  cx: number,
  i0: number,
  i1: number,
  maxIterations: number,
): Gaussian1dFit {
  const [nz, ny, nx] = stack.shape;
  const n = axis === "x" ? nx : axis === "y" ? ny : nz;
  const a = Math.max(0, i0);
  const b = Math.min(n - 1, i1);
  const len = b - a + 1;
  const prof = new Float64Array(len);
  const pos = new Float64Array(len);
  const d = stack.data;
  for (let i = a; i <= b; i++) {
    const z = axis === "z" ? i : cz;
    const y = axis === "y" ? i : cy;
    const x = axis === "x" ? i : cx;
    prof[i - a] = d[(z * ny + y) * nx + x];
    pos[i - a] = i;
  }
  return fitGaussian1d(prof, {
    positions: pos,
    maxIterations,
    sigmaMin: 0.25,
    sigmaMax: Math.max(1, len / 2),
  });
}
