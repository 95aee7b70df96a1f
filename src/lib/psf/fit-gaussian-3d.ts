import type { FitStopReason } from "./analysis-types";
import { fitModel, type IndexedModel } from "./fit-model";

/** Options of {@link fitGaussian3d}. */
export interface FitGaussian3dOptions {
  /** Fit an in-plane rotation θ of the lateral principal axes. @default false */
  rotation?: boolean;
  /** @default 20 */
  maxIterations?: number;
  /**
   * Fit only the voxels inside the ellipsoid inscribed in the window (≈ 52 % of the box); the
   * corners carry background only, which the remaining shell still samples. @default false
   */
  ellipsoidal?: boolean;
  /** Starting values (µm / counts); estimated from moments when absent. */
  seed?: Partial<Gaussian3dParams>;
  /** σ bounds (µm) per axis. @default [0.25 voxel, half the window extent] */
  sigmaMinUm?: { x: number; y: number; z: number };
  sigmaMaxUm?: { x: number; y: number; z: number };
}

/** Parameters of the 3D Gaussian (positions in µm in the window's frame, levels in counts). */
export interface Gaussian3dParams {
  background: number;
  amplitude: number;
  x: number;
  y: number;
  z: number;
  sigmaX: number;
  sigmaY: number;
  sigmaZ: number;
  /** rad; 0 when rotation is not fitted. */
  theta: number;
}

/** Result of {@link fitGaussian3d}. */
export interface Gaussian3dFit extends Gaussian3dParams {
  sigmaXSe: number;
  sigmaYSe: number;
  sigmaZSe: number;
  xSe: number;
  ySe: number;
  zSe: number;
  r2: number;
  sigmaAtBound: boolean;
  iterations: number;
  converged: boolean;
  reason: FitStopReason;
}

/** A sub-volume cut out of a stack: values and its voxel size, shape [z, y, x]. */
export interface Window3d {
  data: Float64Array;
  shape: [number, number, number];
  voxelSizeUm: { x: number; y: number; z: number };
}

/**
 * Fit a 3D Gaussian with independent σx, σy, σz (optionally rotated in-plane) plus offset
 * to a bead window.
 *
 * @param win - window values (counts) with shape [nz, ny, nx] and voxel size (µm)
 * @param options - rotation, iterations, seeds, σ bounds
 * @returns fitted parameters in µm (centre relative to voxel (0,0,0) of the window), SEs, R², convergence
 *
 * Notes: I = B + A·exp(−u²/(2σx²) − v²/(2σy²) − (z − z₀)²/(2σz²)), u = c·dx + s·dy,
 * v = −s·dx + c·dy, (c, s) = (cos θ, sin θ). Analytic Jacobian. A widefield PSF is not
 * separable (its axial extent grows off-axis), so σz from this fit reads high; it is a
 * secondary figure (DESIGN.md §5). Seeds from intensity moments above the window minimum.
 * References: METHODS.md §8 (3D model with separate σ and optional rotation).
 * @example
 * fitGaussian3d({ data, shape: [15, 13, 13], voxelSizeUm: { x: 0.1, y: 0.1, z: 0.2 } }).sigmaZ;
 */
export function fitGaussian3d(win: Window3d, options: FitGaussian3dOptions = {}): Gaussian3dFit {
  const { rotation = false, maxIterations = 20 } = options;
  const [nz, ny, nx] = win.shape;
  const { x: vx, y: vy, z: vz } = win.voxelSizeUm;
  const { ellipsoidal = false } = options;
  const nAll = nz * ny * nx;
  const cx = new Float64Array(nAll);
  const cy = new Float64Array(nAll);
  const cz = new Float64Array(nAll);
  const values = new Float64Array(nAll);
  const hx = (nx - 1) / 2;
  const hy = (ny - 1) / 2;
  const hz = (nz - 1) / 2;
  let n = 0;
  let i = 0;
  for (let z = 0; z < nz; z++)
    for (let y = 0; y < ny; y++)
      for (let x = 0; x < nx; x++, i++) {
        if (ellipsoidal) {
          const e =
            ((x - hx) / (hx + 0.5)) ** 2 + ((y - hy) / (hy + 0.5)) ** 2 + ((z - hz) / (hz + 0.5)) ** 2;
          if (e > 1) continue;
        }
        cx[n] = x * vx;
        cy[n] = y * vy;
        cz[n] = z * vz;
        values[n] = win.data[i];
        n++;
      }
  const m = momentSeed(win);
  const s = { ...m, ...options.seed };
  const sMin = options.sigmaMinUm ?? { x: 0.25 * vx, y: 0.25 * vy, z: 0.25 * vz };
  const sMax = options.sigmaMaxUm ?? { x: (nx * vx) / 2, y: (ny * vy) / 2, z: (nz * vz) / 2 };
  const clampS = (v: number, lo: number, hi: number) => Math.min(Math.max(v, lo * 1.5), hi / 1.5);
  const ampMax = Math.max(1, s.amplitude) * 10 + 1;
  const init = [
    s.background,
    s.amplitude,
    s.x,
    s.y,
    s.z,
    clampS(s.sigmaX, sMin.x, sMax.x),
    clampS(s.sigmaY, sMin.y, sMax.y),
    clampS(s.sigmaZ, sMin.z, sMax.z),
  ];
  const bAbs = Math.abs(s.background) * 10 + ampMax;
  const minV = [-bAbs, 0, 0, 0, 0, sMin.x, sMin.y, sMin.z];
  const maxV = [bAbs, ampMax, (nx - 1) * vx, (ny - 1) * vy, (nz - 1) * vz, sMax.x, sMax.y, sMax.z];
  if (rotation) {
    init.push(0);
    minV.push(-Math.PI / 2);
    maxV.push(Math.PI / 2);
  }
  const model: IndexedModel = {
    nParams: rotation ? 9 : 8,
    value(p, k) {
      const dx = cx[k] - p[2];
      const dy = cy[k] - p[3];
      const dz = cz[k] - p[4];
      let u = dx;
      let v = dy;
      if (rotation) {
        const c = Math.cos(p[8]);
        const sn = Math.sin(p[8]);
        u = c * dx + sn * dy;
        v = -sn * dx + c * dy;
      }
      return (
        p[0] +
        p[1] *
          Math.exp(-(u * u) / (2 * p[5] * p[5]) - (v * v) / (2 * p[6] * p[6]) - (dz * dz) / (2 * p[7] * p[7]))
      );
    },
    gradient(p, k, out) {
      const dx = cx[k] - p[2];
      const dy = cy[k] - p[3];
      const dz = cz[k] - p[4];
      let c = 1;
      let sn = 0;
      if (rotation) {
        c = Math.cos(p[8]);
        sn = Math.sin(p[8]);
      }
      const u = c * dx + sn * dy;
      const v = -sn * dx + c * dy;
      const sx2 = p[5] * p[5];
      const sy2 = p[6] * p[6];
      const sz2 = p[7] * p[7];
      const e = Math.exp(-(u * u) / (2 * sx2) - (v * v) / (2 * sy2) - (dz * dz) / (2 * sz2));
      const ae = p[1] * e;
      out[0] = 1;
      out[1] = e;
      out[2] = ae * ((u / sx2) * c - (v / sy2) * sn);
      out[3] = ae * ((u / sx2) * sn + (v / sy2) * c);
      out[4] = (ae * dz) / sz2;
      out[5] = (ae * u * u) / (sx2 * p[5]);
      out[6] = (ae * v * v) / (sy2 * p[6]);
      out[7] = (ae * dz * dz) / (sz2 * p[7]);
      if (rotation) out[8] = ae * u * v * (1 / sy2 - 1 / sx2);
    },
  };
  const fit = fitModel(values.subarray(0, n), model, {
    initialValues: init,
    minValues: minV,
    maxValues: maxV,
    maxIterations,
  });
  const p = fit.params;
  const at = (k: number) => p[k] <= minV[k] * 1.01 || p[k] >= maxV[k] * 0.99;
  return {
    background: p[0],
    amplitude: p[1],
    x: p[2],
    y: p[3],
    z: p[4],
    sigmaX: p[5],
    sigmaY: p[6],
    sigmaZ: p[7],
    theta: rotation ? p[8] : 0,
    xSe: fit.standardErrors[2],
    ySe: fit.standardErrors[3],
    zSe: fit.standardErrors[4],
    sigmaXSe: fit.standardErrors[5],
    sigmaYSe: fit.standardErrors[6],
    sigmaZSe: fit.standardErrors[7],
    r2: fit.r2,
    sigmaAtBound: at(5) || at(6) || at(7),
    iterations: fit.iterations,
    converged: fit.converged,
    reason: fit.reason,
  };
}

/** Moment seeds (µm, counts) of a window: centroid and second moments above the minimum. */
function momentSeed(win: Window3d): Gaussian3dParams {
  const [nz, ny, nx] = win.shape;
  const { x: vx, y: vy, z: vz } = win.voxelSizeUm;
  const d = win.data;
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < d.length; i++) {
    if (d[i] < min) min = d[i];
    if (d[i] > max) max = d[i];
  }
  // Weights above the midpoint of min and max avoid the noisy background dominating the moments.
  const base = min + 0.25 * (max - min);
  let sw = 0;
  let sx = 0;
  let sy = 0;
  let sz = 0;
  let i = 0;
  for (let z = 0; z < nz; z++)
    for (let y = 0; y < ny; y++)
      for (let x = 0; x < nx; x++, i++) {
        const w = d[i] - base;
        if (w > 0) {
          sw += w;
          sx += w * x;
          sy += w * y;
          sz += w * z;
        }
      }
  const mx = sw > 0 ? sx / sw : (nx - 1) / 2;
  const my = sw > 0 ? sy / sw : (ny - 1) / 2;
  const mz = sw > 0 ? sz / sw : (nz - 1) / 2;
  let vxx = 0;
  let vyy = 0;
  let vzz = 0;
  i = 0;
  for (let z = 0; z < nz; z++)
    for (let y = 0; y < ny; y++)
      for (let x = 0; x < nx; x++, i++) {
        const w = d[i] - base;
        if (w > 0) {
          vxx += w * (x - mx) ** 2;
          vyy += w * (y - my) ** 2;
          vzz += w * (z - mz) ** 2;
        }
      }
  // Moments of a Gaussian truncated at 25 % of its peak underestimate σ² by ≈ 0.5; correct roughly.
  const k = sw > 0 ? 1 / sw / 0.5 : 1;
  return {
    background: min,
    amplitude: max - min,
    x: mx * vx,
    y: my * vy,
    z: mz * vz,
    sigmaX: Math.sqrt(Math.max(vxx * k, 0.25)) * vx,
    sigmaY: Math.sqrt(Math.max(vyy * k, 0.25)) * vy,
    sigmaZ: Math.sqrt(Math.max(vzz * k, 0.25)) * vz,
    theta: 0,
  };
}
