import type { Stack } from "../tiff/stack";
import type { AveragedPsf, BeadResult } from "./analysis-types";
import { axialAsymmetry } from "./axial-asymmetry";
import { FWHM_PER_SIGMA } from "./engine-version";
import { fitGaussian1d } from "./fit-gaussian-1d";
import { halfMaximumWidth } from "./half-maximum-width";

/** Options of {@link averagePsf}. */
export interface AveragePsfOptions {
  /** Half-extent of the averaged volume (µm). */
  halfSizeUm: { lateral: number; axial: number };
  /** @default true */
  farIsIncreasingZ?: boolean;
  /** @default 30 */
  maxIterations?: number;
}

/**
 * Average the included beads into one small PSF volume after sub-voxel registration.
 *
 * @param stack - shape [z, y, x] with voxel size (not mutated)
 * @param beads - bead results; included ones with a centre, background and amplitude are used
 * @param options - half-size of the volume (µm)
 * @returns the averaged, background-subtracted and amplitude-normalised volume (peak ≈ 1) with its
 *   widths from 1D Gaussian fits through the centre voxel and the direct axial width; null when no bead qualifies
 *
 * Notes: each bead is resampled by trilinear interpolation on a grid with the stack's voxel size
 * centred on its fitted centre (xPx, yPx, zPx), so the volume's centre voxel is the bead centre.
 * Samples outside the stack are skipped (a per-voxel count normalises the mean). Linear
 * interpolation low-passes slightly: it adds about 1/6 voxel² to each σ² on average over random
 * sub-voxel phases (computed here for a triangular kernel), so the averaged widths read a little
 * high at coarse sampling.
 * References: common practice (sub-pixel registration and averaging of bead images).
 * @example
 * averagePsf(stack, beads, { halfSizeUm: { lateral: 0.75, axial: 2.8 } })?.fwhmXUm;
 */
export function averagePsf(
  stack: Stack,
  beads: readonly BeadResult[],
  options: AveragePsfOptions,
): AveragedPsf | null {
  const { halfSizeUm, farIsIncreasingZ = true, maxIterations = 30 } = options;
  const vs = stack.voxelSizeUm!;
  const [nz, ny, nx] = stack.shape;
  const hx = Math.max(2, Math.ceil(halfSizeUm.lateral / vs.x));
  const hy = Math.max(2, Math.ceil(halfSizeUm.lateral / vs.y));
  const hz = Math.max(2, Math.ceil(halfSizeUm.axial / vs.z));
  const sx = 2 * hx + 1;
  const sy = 2 * hy + 1;
  const sz = 2 * hz + 1;
  const acc = new Float64Array(sx * sy * sz);
  const cnt = new Float64Array(sx * sy * sz);
  const d = stack.data;
  const use = beads.filter(
    (b) => b.included && b.amplitude !== null && b.amplitude > 0 && b.background !== null,
  );
  if (use.length === 0) return null;
  for (const b of use) {
    const amp = b.amplitude!;
    const bg = b.background!;
    for (let k = 0; k < sz; k++) {
      const z = b.zPx + (k - hz);
      const z0 = Math.floor(z);
      const fz = z - z0;
      if (z0 < 0 || z0 + 1 > nz - 1) continue;
      for (let j = 0; j < sy; j++) {
        const y = b.yPx + (j - hy);
        const y0 = Math.floor(y);
        const fy = y - y0;
        if (y0 < 0 || y0 + 1 > ny - 1) continue;
        for (let i = 0; i < sx; i++) {
          const x = b.xPx + (i - hx);
          const x0 = Math.floor(x);
          const fx = x - x0;
          if (x0 < 0 || x0 + 1 > nx - 1) continue;
          const o = (z0 * ny + y0) * nx + x0;
          const c00 = d[o] * (1 - fx) + d[o + 1] * fx;
          const c01 = d[o + nx] * (1 - fx) + d[o + nx + 1] * fx;
          const c10 = d[o + ny * nx] * (1 - fx) + d[o + ny * nx + 1] * fx;
          const c11 = d[o + ny * nx + nx] * (1 - fx) + d[o + ny * nx + nx + 1] * fx;
          const v = (c00 * (1 - fy) + c01 * fy) * (1 - fz) + (c10 * (1 - fy) + c11 * fy) * fz;
          const idx = (k * sy + j) * sx + i;
          acc[idx] += (v - bg) / amp;
          cnt[idx] += 1;
        }
      }
    }
  }
  const data = new Float32Array(acc.length);
  for (let i = 0; i < acc.length; i++) data[i] = cnt[i] > 0 ? acc[i] / cnt[i] : 0;
  const at = (k: number, j: number, i: number) => data[(k * sy + j) * sx + i];
  const px = Float64Array.from({ length: sx }, (_, i) => at(hz, hy, i));
  const py = Float64Array.from({ length: sy }, (_, j) => at(hz, j, hx));
  const pz = Float64Array.from({ length: sz }, (_, k) => at(k, hy, hx));
  const fitW = (p: Float64Array, step: number) => {
    const f = fitGaussian1d(p, { maxIterations, sigmaMin: 0.25, sigmaMax: p.length / 2 });
    return Number.isFinite(f.sigma) && f.amplitude > 0 ? FWHM_PER_SIGMA * f.sigma * step : null;
  };
  // Axial Gaussian on the central part (±1.5 of its own half-max width), as for single beads.
  const hm = halfMaximumWidth(pz, 0, hz);
  const hzFit = hm.width !== null ? Math.max(2, Math.min(hz, Math.ceil(0.75 * hm.width * 2))) : hz;
  const pzc = pz.subarray(hz - hzFit, hz + hzFit + 1);
  const onAxis = new Float64Array(sz);
  const energy = new Float64Array(sz);
  for (let k = 0; k < sz; k++) {
    onAxis[k] = pz[k];
    let e = 0;
    for (let j = 0; j < sy; j++) for (let i = 0; i < sx; i++) e += at(k, j, i);
    energy[k] = e;
  }
  return {
    shape: [sz, sy, sx],
    voxelSizeUm: { ...vs },
    data,
    beadCount: use.length,
    fwhmXUm: fitW(px, vs.x),
    fwhmYUm: fitW(py, vs.y),
    fwhmZUm: fitW(Float64Array.from(pzc), vs.z),
    fwhmZDirectUm: hm.width !== null ? hm.width * vs.z : null,
    axialAsymmetry: axialAsymmetry(onAxis, energy, hz, farIsIncreasingZ).sideLobeRatio,
  };
}
