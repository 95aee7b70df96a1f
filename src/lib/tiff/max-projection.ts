/**
 * Maximum-intensity projection of a z-stack and its 8-bit grey thumbnail, for previews
 * (stack list and stack page). Display only: nothing here feeds a measurement.
 */
import type { Stack } from "./stack";

/** A 2D float image, row-major (y, x): the pixel at (y, x) is `data[y * width + x]`. */
export interface FloatImage {
  /** Pixels per row (x). */
  width: number;
  /** Rows (y). */
  height: number;
  data: Float32Array;
}

/**
 * Maximum-intensity projection along z.
 *
 * @param stack - shape [nz, ny, nx], data row-major (z, y, x); any `StackDtype` (not modified)
 * @returns `{ width: nx, height: ny, data }`, data of length ny·nx in the stack's intensity units.
 *   For float32 stacks NaN voxels are skipped; a pixel that is NaN in every plane stays NaN.
 * @throws {RangeError} when `stack.shape` is not three positive integers or `stack.data` does not
 *   hold exactly nz·ny·nx values.
 *
 * Notes: out(y, x) = max over z of stack(z, y, x). Values above 2^24 (uint32 only) are rounded to
 * the nearest float32, which is exact enough for display.
 *
 * @example
 * const mip = maxProjection({ data: new Uint8Array([1, 5, 4, 2]), shape: [2, 1, 2], dtype: "uint8", voxelSizeUm: null });
 * Array.from(mip.data); // [4, 5]
 */
export function maxProjection(stack: Stack): FloatImage {
  checkStack(stack);
  const [nz, ny, nx] = stack.shape;
  const plane = ny * nx;
  const src = stack.data;
  const out = new Float32Array(plane);
  for (let i = 0; i < plane; i++) out[i] = src[i];
  if (stack.dtype === "float32") {
    for (let z = 1; z < nz; z++) {
      const base = z * plane;
      for (let i = 0; i < plane; i++) {
        const v = src[base + i];
        const m = out[i];
        // m !== m: the running maximum is still NaN (every plane so far was NaN).
        if (v > m || (m !== m && v === v)) out[i] = v;
      }
    }
  } else {
    for (let z = 1; z < nz; z++) {
      const base = z * plane;
      for (let i = 0; i < plane; i++) {
        const v = src[base + i];
        if (v > out[i]) out[i] = v;
      }
    }
  }
  return { width: nx, height: ny, data: out };
}

/** Options of {@link toGreyThumbnail}. */
export interface GreyThumbnailOptions {
  /**
   * Longest side of the thumbnail, px. The image is reduced by the smallest integer block size that
   * fits; an image already this small keeps its size (never enlarged).
   * @default 256
   */
  maxSidePx?: number;
  /** Percentile of the thumbnail's pixels shown as black, %. @default 0.5 */
  lowPercentile?: number;
  /** Percentile of the thumbnail's pixels shown as white, %. @default 99.9 */
  highPercentile?: number;
}

/** Result of {@link toGreyThumbnail}. */
export interface GreyThumbnail {
  width: number;
  height: number;
  /** 8-bit grey values, row-major (y, x), length width·height. */
  data: Uint8Array;
  /** Side of the square block reduced to one thumbnail pixel (1 = not reduced), px. */
  blockSizePx: number;
  /** Intensity shown as 0 (input units). */
  lowValue: number;
  /** Intensity shown as 255 (input units). */
  highValue: number;
}

/**
 * Turn a 2D float image (e.g. a maximum-intensity projection) into an 8-bit grey thumbnail.
 *
 * @param image - width × height float image (not modified); NaN and ±Infinity pixels are ignored
 *   by the block maximum and the percentiles, and shown black when a whole block is non-finite
 * @param options - see `GreyThumbnailOptions` (defaults are documented there once)
 * @returns the thumbnail (at most `maxSidePx` on its long side) with the block size and the two
 *   intensities mapped to black and white
 * @throws {RangeError} for a malformed image, a `maxSidePx` that is not a positive integer, or
 *   percentiles outside 0 ≤ low < high ≤ 100.
 *
 * Notes: the image is first reduced by the block maximum over b × b pixels,
 * b = ceil(max(width, height) / maxSidePx) (blocks at the right and bottom edges may be partial),
 * so that sub-resolution beads survive the reduction instead of being averaged away. The contrast
 * is then stretched linearly between the low and high percentiles of the reduced image's finite
 * pixels (linear interpolation between closest ranks), clipping below and above: a robust stretch
 * that ignores a few hot pixels. A constant image maps to 0.
 * References: percentile definition 7 of Hyndman & Fan, Am. Stat. 50:361 (1996) — from memory.
 *
 * @example
 * const t = toGreyThumbnail({ width: 4, height: 2, data: new Float32Array([0, 1, 2, 3, 4, 5, 6, 7]) }, { maxSidePx: 2 });
 * [t.width, t.height, t.blockSizePx]; // [2, 1, 2]
 */
export function toGreyThumbnail(image: FloatImage, options: GreyThumbnailOptions = {}): GreyThumbnail {
  const { maxSidePx = 256, lowPercentile = 0.5, highPercentile = 99.9 } = options;
  checkImage(image);
  if (!Number.isInteger(maxSidePx) || maxSidePx < 1) {
    throw new RangeError(`maxSidePx must be a positive integer, got ${maxSidePx}`);
  }
  if (
    !Number.isFinite(lowPercentile) ||
    !Number.isFinite(highPercentile) ||
    lowPercentile < 0 ||
    highPercentile > 100 ||
    lowPercentile >= highPercentile
  ) {
    throw new RangeError(
      `percentiles must satisfy 0 <= lowPercentile < highPercentile <= 100, got ${lowPercentile} and ${highPercentile}`,
    );
  }
  const { width, height } = image;
  const block = Math.max(1, Math.ceil(Math.max(width, height) / maxSidePx));
  const reduced = blockMax(image, block);
  const finite = finiteSorted(reduced.data);
  const lowValue = finite.length ? percentileOfSorted(finite, lowPercentile) : 0;
  const highValue = finite.length ? percentileOfSorted(finite, highPercentile) : 0;
  const range = highValue - lowValue;
  const out = new Uint8Array(reduced.data.length);
  if (range > 0) {
    const scale = 255 / range;
    for (let i = 0; i < out.length; i++) {
      const v = reduced.data[i];
      if (!Number.isFinite(v)) continue; // stays 0
      const g = (v - lowValue) * scale;
      out[i] = g <= 0 ? 0 : g >= 255 ? 255 : Math.round(g);
    }
  }
  return { width: reduced.width, height: reduced.height, data: out, blockSizePx: block, lowValue, highValue };
}

/** Block maximum over b × b pixels, ignoring non-finite values; an all-non-finite block is NaN. */
function blockMax(image: FloatImage, block: number): FloatImage {
  const { width, height, data } = image;
  if (block === 1) return { width, height, data };
  const w = Math.ceil(width / block);
  const h = Math.ceil(height / block);
  const out = new Float32Array(w * h).fill(Number.NaN);
  for (let y = 0; y < height; y++) {
    const row = Math.floor(y / block) * w;
    for (let x = 0; x < width; x++) {
      const v = data[y * width + x];
      if (!Number.isFinite(v)) continue;
      const j = row + Math.floor(x / block);
      const m = out[j];
      if (m !== m || v > m) out[j] = v;
    }
  }
  return { width: w, height: h, data: out };
}

function finiteSorted(data: Float32Array): Float32Array {
  const values = new Float32Array(data.length);
  let n = 0;
  for (let i = 0; i < data.length; i++) {
    const v = data[i];
    if (Number.isFinite(v)) values[n++] = v;
  }
  return values.subarray(0, n).sort();
}

/** Percentile p (%) of ascending values, linear interpolation between closest ranks. */
function percentileOfSorted(sorted: Float32Array, p: number): number {
  const pos = (p / 100) * (sorted.length - 1);
  const lo = Math.floor(pos);
  const hi = Math.min(lo + 1, sorted.length - 1);
  return sorted[lo] + (sorted[hi] - sorted[lo]) * (pos - lo);
}

function checkStack(stack: Stack): void {
  const shape = stack?.shape;
  if (!Array.isArray(shape) || shape.length !== 3 || !shape.every((n) => Number.isInteger(n) && n > 0)) {
    throw new RangeError(
      `stack.shape must be three positive integers [nz, ny, nx], got ${JSON.stringify(shape)}`,
    );
  }
  const expected = shape[0] * shape[1] * shape[2];
  if (!stack.data || stack.data.length !== expected) {
    throw new RangeError(
      `stack.data must hold nz·ny·nx = ${expected} values, got ${stack.data ? stack.data.length : stack.data}`,
    );
  }
}

function checkImage(image: FloatImage): void {
  const { width, height, data } = image ?? ({} as FloatImage);
  if (!Number.isInteger(width) || width < 1 || !Number.isInteger(height) || height < 1) {
    throw new RangeError(`image width and height must be positive integers, got ${width} × ${height}`);
  }
  if (!(data instanceof Float32Array) || data.length !== width * height) {
    throw new RangeError(
      `image.data must be a Float32Array of width·height = ${width * height} values, got ${
        data instanceof Float32Array ? data.length : typeof data
      }`,
    );
  }
}
