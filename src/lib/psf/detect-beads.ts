import type { Stack } from "../tiff/stack";
import { gaussianKernel } from "./gaussian-kernel";

/** Options of {@link detectBeads}. */
export interface DetectBeadsOptions {
  /** Background level (counts), e.g. the stack median. */
  background: number;
  /** Raw-image noise σ (counts), e.g. 1.4826·MAD. */
  noiseSigma: number;
  /** Smoothing σ per axis in voxels. */
  smoothingSigmaPx: { x: number; y: number; z: number };
  /** Threshold = background + k·σ_smoothed. @default 6 */
  thresholdK?: number;
  /** Maxima closer than this laterally AND axially (µm) are merged, keeping the brighter. */
  minSeparationUm: { lateral: number; axial: number };
  /**
   * Secondary-maximum rule: a maximum inside `secondaryZoneUm` (cylinder: lateral radius, axial half-height) of a brighter
   * kept one and dimmer than `secondaryFraction` × its height is taken as that bead's ring or side
   * lobe and merged. @default 0.25 (zone: none)
   */
  secondaryFraction?: number;
  secondaryZoneUm?: { lateral: number; axial: number };
  /**
   * Axial side-lobe rule: a maximum within `minSeparationUm.lateral` laterally and `axialUm` axially
   * of a brighter kept one, and dimmer than `fraction` × its height, is merged (side lobes of aberrated
   * PSFs reach ≈ 0.4 of the peak, METHODS §8). Not applied when absent.
   */
  axialLobe?: { axialUm: number; fraction: number };
  /** Stop collecting candidates beyond this many (protects memory on pathological input). @default 200000 */
  maxCandidates?: number;
  onProgress?: (fraction: number) => void;
}

/** A detected bead: sub-voxel position (voxels, 0-based) and smoothed height above background (counts). */
export interface DetectedPeak {
  x: number;
  y: number;
  z: number;
  height: number;
}

/** Result of {@link detectBeads}. */
export interface DetectBeadsResult {
  peaks: DetectedPeak[];
  /** Threshold on the smoothed image (counts). */
  threshold: number;
  smoothedNoiseSigma: number;
  /** Local maxima above threshold before merging. */
  candidatesAboveThreshold: number;
  /** Maxima removed by the minimum-separation rule. */
  merged: number;
  truncated: boolean;
}

/**
 * Find bead candidates: light separable Gaussian smoothing, 3D local maxima above
 * background + k·σ, minimum-separation merging, sub-voxel refinement.
 *
 * @param stack - shape [z, y, x], voxel size required (not mutated)
 * @param options - background, noise, smoothing, threshold, separation
 * @returns peaks sorted by decreasing height, with the threshold used
 *
 * Notes: streaming, plane by plane: each plane is smoothed in x then y into a ring buffer of
 * 2r_z + 1 planes, the z pass writes a ring of 3 smoothed planes, and plane t is searched for
 * maxima once t + 1 is ready. Memory is O((2r_z + 4)·ny·nx) floats, independent of nz. A voxel
 * is a local maximum when it is above the threshold and ≥ its 26 neighbours — the same test as
 * comparing with a 3×3×3 (separable) max filter, but only evaluated where the threshold is
 * passed, which skips almost every voxel. σ_smoothed = σ·Π_axes √Σw² (binomial kernels, see `lightKernel`); edges are clamped and the threshold is
 * raised near them by the clamped kernel's larger noise gain.
 * Sub-voxel position: 3-point parabola per axis on the smoothed values. Merging: maxima sorted
 * by height; one is dropped when a brighter kept one is within `minSeparationUm.lateral`
 * laterally and `minSeparationUm.axial` axially (this also merges axial side lobes), or when it lies
 * inside `secondaryZoneUm` of a kept one and is dimmer than `secondaryFraction` of it (Airy rings and
 * defocus rings of bright beads, which are local maxima above the threshold).
 * References: common practice (smoothing + local maxima + non-maximum suppression).
 * @example
 * detectBeads(stack, { background: 100, noiseSigma: 10, smoothingSigmaPx: { x: 1, y: 1, z: 1 }, minSeparationUm: { lateral: 0.3, axial: 3 } });
 */
export function detectBeads(stack: Stack, options: DetectBeadsOptions): DetectBeadsResult {
  const {
    background,
    noiseSigma,
    smoothingSigmaPx,
    thresholdK = 6,
    minSeparationUm,
    maxCandidates = 200_000,
    onProgress,
    secondaryFraction = 0.25,
    secondaryZoneUm,
    axialLobe,
  } = options;
  if (!stack.voxelSizeUm) throw new TypeError("detectBeads: stack.voxelSizeUm is required");
  const { x: vx, y: vy, z: vz } = stack.voxelSizeUm;
  const [nz, ny, nx] = stack.shape;
  const plane = ny * nx;
  const data = stack.data;
  const kx = lightKernel(smoothingSigmaPx.x);
  const ky = lightKernel(smoothingSigmaPx.y);
  const kz = lightKernel(smoothingSigmaPx.z);
  const rx = (kx.length - 1) / 2;
  const ry = (ky.length - 1) / 2;
  const rz = (kz.length - 1) / 2;
  const fx = edgeNoiseFactors(kx, nx);
  const fy = edgeNoiseFactors(ky, ny);
  const fz = edgeNoiseFactors(kz, nz);
  const smoothedNoiseSigma = noiseSigma * fx.interior * fy.interior * fz.interior;
  const threshold = background + thresholdK * smoothedNoiseSigma;
  // Near the borders the clamped kernel averages fewer independent voxels, so the smoothed noise is
  // larger there; the threshold is raised by the exact factor to keep the false-positive rate flat.
  const kSigma = thresholdK * noiseSigma;

  const R = 2 * rz + 1;
  const xyRing: Float32Array[] = Array.from({ length: R }, () => new Float32Array(plane));
  const sRing: Float32Array[] = Array.from({ length: 3 }, () => new Float32Array(plane));
  const tmp = new Float32Array(plane);
  const cand: number[] = []; // x, y, z, height (flat, avoids per-candidate objects in the hot loop)
  let truncated = false;

  const smoothXY = (z: number, out: Float32Array) => {
    const base = z * plane;
    const kl = kx.length;
    const k0 = kx[0];
    const k1 = kx[1] ?? 0;
    const k2 = kx[2] ?? 0;
    const k3 = kx[3] ?? 0;
    const k4 = kx[4] ?? 0;
    for (let y = 0; y < ny; y++) {
      const ro = base + y * nx;
      const to = y * nx;
      // Interior: unrolled for the 3- and 5-tap kernels used in practice (σ ≤ 1 voxel, 2σ truncation).
      if (kl === 5) {
        for (let x = 2; x < nx - 2; x++) {
          const o = ro + x - 2;
          tmp[to + x] =
            k0 * data[o] + k1 * data[o + 1] + k2 * data[o + 2] + k3 * data[o + 3] + k4 * data[o + 4];
        }
      } else if (kl === 3) {
        for (let x = 1; x < nx - 1; x++) {
          const o = ro + x - 1;
          tmp[to + x] = k0 * data[o] + k1 * data[o + 1] + k2 * data[o + 2];
        }
      }
      for (let x = 0; x < nx; x++) {
        if (kl <= 5 && kl > 1 && x >= rx && x < nx - rx) continue;
        let s = 0;
        for (let k = 0; k < kl; k++) {
          const xx = x + k - rx;
          s += kx[k] * data[ro + (xx < 0 ? 0 : xx >= nx ? nx - 1 : xx)];
        }
        tmp[to + x] = s;
      }
    }
    for (let y = 0; y < ny; y++) {
      const rows: number[] = [];
      for (let k = 0; k < ky.length; k++) rows.push(Math.min(ny - 1, Math.max(0, y + k - ry)) * nx);
      combineRows(out, y * nx, tmp, rows, ky, nx);
    }
  };

  const searchPlane = (t: number) => {
    const c = sRing[t % 3];
    const below = t > 0 ? sRing[(t - 1) % 3] : null;
    const above = t < nz - 1 ? sRing[(t + 1) % 3] : null;
    const fzt = fz.factors[t];
    for (let y = 0; y < ny; y++) {
      const ro = y * nx;
      const fzy = fzt * fy.factors[y];
      for (let x = 0; x < nx; x++) {
        const v = c[ro + x];
        if (!(v > threshold)) continue;
        if (!(v > background + kSigma * fzy * fx.factors[x])) continue;
        let isMax = true;
        for (let dy = -1; dy <= 1 && isMax; dy++) {
          const yy = y + dy;
          if (yy < 0 || yy >= ny) continue;
          for (let dx = -1; dx <= 1; dx++) {
            const xx = x + dx;
            if (xx < 0 || xx >= nx) continue;
            const j = yy * nx + xx;
            if ((dx !== 0 || dy !== 0) && c[j] > v) {
              isMax = false;
              break;
            }
            if ((below && below[j] > v) || (above && above[j] > v)) {
              isMax = false;
              break;
            }
          }
        }
        if (!isMax) continue;
        if (cand.length / 4 >= maxCandidates) {
          truncated = true;
          continue;
        }
        const i = ro + x;
        const ox = x > 0 && x < nx - 1 ? parabolicOffset(c[i - 1], v, c[i + 1]) : 0;
        const oy = y > 0 && y < ny - 1 ? parabolicOffset(c[i - nx], v, c[i + nx]) : 0;
        const oz = below && above ? parabolicOffset(below[i], v, above[i]) : 0;
        cand.push(x + ox, y + oy, t + oz, v - background);
      }
    }
  };

  for (let p = 0; p <= nz + rz; p++) {
    if (p < nz) smoothXY(p, xyRing[p % R]);
    const q = p - rz;
    if (q >= 0 && q < nz) {
      const out = sRing[q % 3];
      const srcs: Float32Array[] = [];
      for (let k = 0; k < kz.length; k++) srcs.push(xyRing[Math.min(nz - 1, Math.max(0, q + k - rz)) % R]);
      combinePlanes(out, srcs, kz, plane);
    }
    const t = q - 1;
    if (t >= 0 && t < nz) searchPlane(t);
    if (onProgress && p % 8 === 0) onProgress(Math.min(1, p / (nz + rz)));
  }
  onProgress?.(1);

  // Merge maxima closer than the minimum separation, brightest first.
  const nc = cand.length / 4;
  const order = Array.from({ length: nc }, (_, i) => i).sort(
    (a, b) => cand[4 * b + 3] - cand[4 * a + 3] || a - b,
  );
  const kept: DetectedPeak[] = [];
  const lat2 = minSeparationUm.lateral * minSeparationUm.lateral;
  for (const i of order) {
    const x = cand[4 * i];
    const y = cand[4 * i + 1];
    const z = cand[4 * i + 2];
    const h = cand[4 * i + 3];
    let clash = false;
    for (const k of kept) {
      const dx = (k.x - x) * vx;
      const dy = (k.y - y) * vy;
      const dz = (k.z - z) * vz;
      const r2 = dx * dx + dy * dy;
      if (r2 < lat2 && Math.abs(dz) < minSeparationUm.axial) {
        clash = true;
        break;
      }
      if (axialLobe && r2 < lat2 && Math.abs(dz) < axialLobe.axialUm && h < axialLobe.fraction * k.height) {
        clash = true;
        break;
      }
      if (secondaryZoneUm && h < secondaryFraction * k.height) {
        if (
          dx * dx + dy * dy < secondaryZoneUm.lateral * secondaryZoneUm.lateral &&
          Math.abs(dz) < secondaryZoneUm.axial
        ) {
          clash = true;
          break;
        }
      }
    }
    if (!clash) kept.push({ x, y, z, height: cand[4 * i + 3] });
  }
  return {
    peaks: kept,
    threshold,
    smoothedNoiseSigma,
    candidatesAboveThreshold: nc,
    merged: nc - kept.length,
    truncated,
  };
}

/**
 * Light smoothing kernel for detection: the binomial [1 2 1]/4 (σ = 0.71) for σ ≤ 0.85 voxel,
 * [1 4 6 4 1]/16 (σ = 1) up to 1.2, else a Gaussian truncated at 2σ. Binomial kernels are the
 * discrete Gaussians of smallest support, which keeps the three passes cheap.
 */
function lightKernel(sigma: number): Float32Array {
  if (sigma <= 0) return Float32Array.of(1);
  if (sigma <= 0.85) return Float32Array.of(0.25, 0.5, 0.25);
  if (sigma <= 1.2) return Float32Array.of(1 / 16, 4 / 16, 6 / 16, 4 / 16, 1 / 16);
  return gaussianKernel(sigma, 2);
}

/** out[o + i] = Σ_k w_k·src[rows[k] + i], i < n — one pass, unrolled for 3 and 5 taps. */
function combineRows(
  out: Float32Array,
  o: number,
  src: Float32Array,
  rows: number[],
  w: Float32Array,
  n: number,
): void {
  if (w.length === 5) {
    const [a, b, c, d, e] = rows;
    const [w0, w1, w2, w3, w4] = w;
    for (let i = 0; i < n; i++)
      out[o + i] = w0 * src[a + i] + w1 * src[b + i] + w2 * src[c + i] + w3 * src[d + i] + w4 * src[e + i];
  } else if (w.length === 3) {
    const [a, b, c] = rows;
    const [w0, w1, w2] = w;
    for (let i = 0; i < n; i++) out[o + i] = w0 * src[a + i] + w1 * src[b + i] + w2 * src[c + i];
  } else {
    for (let i = 0; i < n; i++) {
      let s = 0;
      for (let k = 0; k < w.length; k++) s += w[k] * src[rows[k] + i];
      out[o + i] = s;
    }
  }
}

/** out[i] = Σ_k w_k·srcs[k][i] — one pass, unrolled for 3 and 5 taps. */
function combinePlanes(out: Float32Array, srcs: Float32Array[], w: Float32Array, n: number): void {
  if (w.length === 5) {
    const [a, b, c, d, e] = srcs;
    const [w0, w1, w2, w3, w4] = w;
    for (let i = 0; i < n; i++) out[i] = w0 * a[i] + w1 * b[i] + w2 * c[i] + w3 * d[i] + w4 * e[i];
  } else if (w.length === 3) {
    const [a, b, c] = srcs;
    const [w0, w1, w2] = w;
    for (let i = 0; i < n; i++) out[i] = w0 * a[i] + w1 * b[i] + w2 * c[i];
  } else {
    for (let i = 0; i < n; i++) {
      let s = 0;
      for (let k = 0; k < w.length; k++) s += w[k] * srcs[k][i];
      out[i] = s;
    }
  }
}

/**
 * Per-index noise gain √Σ(w_eff)² of a kernel applied with clamped edges along an axis of length n,
 * as `factors[i]` (≥ 1 relative to the interior gain) plus the interior gain itself.
 */
function edgeNoiseFactors(k: Float32Array, n: number): { factors: Float64Array; interior: number } {
  const r = (k.length - 1) / 2;
  let interior = 0;
  for (let j = 0; j < k.length; j++) interior += k[j] * k[j];
  interior = Math.sqrt(interior);
  const factors = new Float64Array(n);
  const eff = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    if (i >= r && i < n - r) {
      factors[i] = 1;
      continue;
    }
    eff.fill(0);
    for (let j = 0; j < k.length; j++) eff[Math.min(n - 1, Math.max(0, i + j - r))] += k[j];
    let s = 0;
    for (let m = 0; m < n; m++) s += eff[m] * eff[m];
    factors[i] = Math.sqrt(s) / interior;
  }
  return { factors, interior };
}

/** Vertex offset of the parabola through (−1, a), (0, b), (1, c), clamped to ±0.5. */
function parabolicOffset(a: number, b: number, c: number): number {
  const den = a - 2 * b + c;
  if (!(den < 0)) return 0;
  const o = (0.5 * (a - c)) / den;
  return Math.max(-0.5, Math.min(0.5, o));
}
