import { describe, expect, it } from "vitest";
import { maxProjection, toGreyThumbnail, type FloatImage, type Stack } from "../../../../src/lib/tiff";

// All stacks and images here are invented for the tests.

function stackOf(
  data: Stack["data"],
  shape: [number, number, number],
  dtype: Stack["dtype"] = "uint16",
): Stack {
  return { data, shape, dtype, voxelSizeUm: null };
}

/** A uint16 stack with a known maximum plane per pixel: max(z, y, x) = 1000 + 10·y + x at z = (x + y) mod nz. */
function knownStack(nz: number, ny: number, nx: number): Stack {
  const data = new Uint16Array(nz * ny * nx);
  for (let z = 0; z < nz; z++)
    for (let y = 0; y < ny; y++)
      for (let x = 0; x < nx; x++) {
        const peak = (x + y) % nz === z;
        data[(z * ny + y) * nx + x] = peak ? 1000 + 10 * y + x : z * 3 + ((x * 7 + y) % 5);
      }
  return stackOf(data, [nz, ny, nx]);
}

describe("maxProjection", () => {
  it("returns the per-pixel maximum over z (known truth on a synthetic stack)", () => {
    const stack = knownStack(5, 4, 6);
    const mip = maxProjection(stack);
    expect(mip.width).toBe(6);
    expect(mip.height).toBe(4);
    expect(mip.data).toBeInstanceOf(Float32Array);
    for (let y = 0; y < 4; y++)
      for (let x = 0; x < 6; x++) expect(mip.data[y * 6 + x]).toBe(1000 + 10 * y + x);
  });

  it("handles one plane, every integer dtype and float32 with negative values", () => {
    expect(Array.from(maxProjection(stackOf(new Uint8Array([3, 9, 1]), [1, 1, 3], "uint8")).data)).toEqual([
      3, 9, 1,
    ]);
    expect(
      Array.from(maxProjection(stackOf(new Uint32Array([7, 2, 4_000_000, 5]), [2, 1, 2], "uint32")).data),
    ).toEqual([4_000_000, 5]);
    const f = maxProjection(stackOf(new Float32Array([-5, -1, -3, -2]), [2, 2, 1], "float32"));
    expect(Array.from(f.data)).toEqual([-3, -1]);
  });

  it("skips NaN voxels of float stacks and keeps NaN only where every plane is NaN", () => {
    const data = new Float32Array([Number.NaN, 2, Number.NaN, 7, Number.NaN, 1, Number.NaN, Number.NaN, 5]);
    const mip = maxProjection(stackOf(data, [3, 1, 3], "float32"));
    expect(mip.data[0]).toBe(7);
    expect(mip.data[1]).toBe(2);
    expect(mip.data[2]).toBe(5);
    const allNan = maxProjection(stackOf(new Float32Array([Number.NaN, Number.NaN]), [2, 1, 1], "float32"));
    expect(Number.isNaN(allNan.data[0])).toBe(true);
  });

  it("does not modify the stack", () => {
    const stack = knownStack(4, 3, 3);
    const copy = stack.data.slice();
    const shape = [...stack.shape];
    maxProjection(stack);
    expect(stack.data).toEqual(copy);
    expect(stack.shape).toEqual(shape);
  });

  it("names the bad argument", () => {
    expect(() => maxProjection(stackOf(new Uint16Array(6), [0, 2, 3]))).toThrow(
      new RangeError("stack.shape must be three positive integers [nz, ny, nx], got [0,2,3]"),
    );
    expect(() => maxProjection(stackOf(new Uint16Array(5), [1, 2, 3]))).toThrow(
      new RangeError("stack.data must hold nz·ny·nx = 6 values, got 5"),
    );
    expect(() => maxProjection(stackOf(new Uint16Array(6), [1, 2.5, 3] as [number, number, number]))).toThrow(
      RangeError,
    );
  });
});

function image(width: number, height: number, f: (x: number, y: number) => number): FloatImage {
  const data = new Float32Array(width * height);
  for (let y = 0; y < height; y++) for (let x = 0; x < width; x++) data[y * width + x] = f(x, y);
  return { width, height, data };
}

describe("toGreyThumbnail", () => {
  it("keeps a small image's size and maps the percentiles to 0 and 255 linearly", () => {
    // 0…99 in raster order: 0.5 % → 0.495, 99.9 % → 98.901 (linear between closest ranks).
    // Source: percentile definition 7, Hyndman & Fan, Am. Stat. 50:361 (1996) — from memory.
    const img = image(10, 10, (x, y) => y * 10 + x);
    const t = toGreyThumbnail(img);
    expect(t.width).toBe(10);
    expect(t.height).toBe(10);
    expect(t.blockSizePx).toBe(1);
    expect(t.lowValue).toBeCloseToAbs(0.495, 1e-9);
    expect(t.highValue).toBeCloseToAbs(98.901, 1e-4);
    expect(t.data[0]).toBe(0);
    expect(t.data[99]).toBe(255);
    expect(t.data[98]).toBe(253); // (98 − 0.495) · 255 / 98.406 = 252.7
    expect(t.data[50]).toBe(Math.round(((50 - 0.495) * 255) / (98.901 - 0.495)));
    for (let i = 1; i < 100; i++) expect(t.data[i]).toBeGreaterThanOrEqual(t.data[i - 1]);
  });

  it("reduces by the block maximum so a one-pixel bead survives", () => {
    // 100 × 40 px with one bright pixel at (57, 13) and a gentle ramp; 25 px wide → block 4.
    const img = image(100, 40, (x, y) => (x === 57 && y === 13 ? 5000 : 100 + x * 0.1));
    const t = toGreyThumbnail(img, { maxSidePx: 25 });
    expect(t.blockSizePx).toBe(4);
    expect(t.width).toBe(25);
    expect(t.height).toBe(10);
    expect(t.data[3 * 25 + 14]).toBe(255); // (57, 13) lies in block (14, 3)
    expect(t.highValue).toBeGreaterThan(100 + 99 * 0.1);
  });

  it("sizes partial edge blocks with ceil and never exceeds maxSidePx", () => {
    const img = image(1001, 333, (x, y) => (x * 31 + y * 17) % 97);
    const t = toGreyThumbnail(img, { maxSidePx: 256 });
    expect(t.blockSizePx).toBe(4); // ceil(1001 / 256)
    expect(t.width).toBe(251); // ceil(1001 / 4)
    expect(t.height).toBe(84); // ceil(333 / 4)
    expect(t.data.length).toBe(251 * 84);
    expect(Math.max(t.width, t.height)).toBeLessThanOrEqual(256);
  });

  it("clips a few hot pixels instead of letting them darken the image", () => {
    // 10 000 px ramp 0…999 plus 5 hot pixels (0.05 %) at 1e6: the 99.9 % point stays on the ramp.
    const img = image(100, 100, (x, y) => (y === 0 && x < 5 ? 1e6 : ((y * 100 + x) % 1000) * 1));
    const t = toGreyThumbnail(img);
    expect(t.highValue).toBeLessThan(1000);
    expect(t.data[0]).toBe(255);
    expect(t.data[599]).toBeGreaterThan(0); // ramp value 599, mid-grey
  });

  it("maps a constant image to black and ignores non-finite pixels", () => {
    const flat = toGreyThumbnail(image(8, 8, () => 42));
    expect(flat.lowValue).toBe(42);
    expect(flat.highValue).toBe(42);
    expect(flat.data.every((v) => v === 0)).toBe(true);
    const odd = toGreyThumbnail(image(4, 1, (x) => [Number.NaN, 0, Number.POSITIVE_INFINITY, 10][x]));
    expect(Array.from(odd.data)).toEqual([0, 0, 0, 255]);
    const none = toGreyThumbnail(image(2, 2, () => Number.NaN));
    expect(Array.from(none.data)).toEqual([0, 0, 0, 0]);
  });

  it("does not modify the image", () => {
    const img = image(30, 20, (x, y) => Math.sin(x) * 100 + y);
    const copy = img.data.slice();
    toGreyThumbnail(img, { maxSidePx: 7 });
    expect(img.data).toEqual(copy);
  });

  it("names the bad argument", () => {
    const img = image(4, 4, (x) => x);
    expect(() => toGreyThumbnail(img, { maxSidePx: 0 })).toThrow(
      new RangeError("maxSidePx must be a positive integer, got 0"),
    );
    expect(() => toGreyThumbnail(img, { maxSidePx: 10.5 })).toThrow(/maxSidePx must be a positive integer/);
    expect(() => toGreyThumbnail(img, { lowPercentile: 50, highPercentile: 50 })).toThrow(
      new RangeError("percentiles must satisfy 0 <= lowPercentile < highPercentile <= 100, got 50 and 50"),
    );
    expect(() => toGreyThumbnail(img, { highPercentile: 101 })).toThrow(RangeError);
    expect(() => toGreyThumbnail({ width: 3, height: 0, data: new Float32Array(0) })).toThrow(
      new RangeError("image width and height must be positive integers, got 3 × 0"),
    );
    expect(() => toGreyThumbnail({ width: 2, height: 2, data: new Float32Array(3) })).toThrow(
      new RangeError("image.data must be a Float32Array of width·height = 4 values, got 3"),
    );
  });

  it("works end to end on a projected synthetic bead stack", () => {
    // One Gaussian bead (σ = 1.5 px) at (z, y, x) = (3, 20, 30) on a background of 100, in 8 × 48 × 64.
    const [nz, ny, nx] = [8, 48, 64];
    const data = new Uint16Array(nz * ny * nx);
    for (let z = 0; z < nz; z++)
      for (let y = 0; y < ny; y++)
        for (let x = 0; x < nx; x++) {
          const r2 = (x - 30) ** 2 + (y - 20) ** 2 + ((z - 3) * 2) ** 2;
          data[(z * ny + y) * nx + x] = Math.round(100 + 3000 * Math.exp(-r2 / (2 * 1.5 ** 2)));
        }
    const mip = maxProjection(stackOf(data, [nz, ny, nx]));
    expect(mip.data[20 * nx + 30]).toBe(3100);
    const t = toGreyThumbnail(mip, { maxSidePx: 32 });
    expect([t.width, t.height, t.blockSizePx]).toEqual([32, 24, 2]);
    expect(t.data[10 * 32 + 15]).toBe(255); // the bead's block
    expect(t.data[0]).toBe(0); // background
  });
});
