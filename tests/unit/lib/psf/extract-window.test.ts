import { describe, expect, it } from "vitest";
import { extractWindow } from "@/lib/psf/extract-window";
import type { Stack } from "@/lib/tiff/stack";

const stack: Stack = {
  data: Uint16Array.from({ length: 4 * 5 * 6 }, (_, i) => i),
  shape: [4, 5, 6],
  dtype: "uint16",
  voxelSizeUm: { x: 0.1, y: 0.1, z: 0.2 },
};

describe("extractWindow", () => {
  it("copies the box around the rounded centre, in (z, y, x) order", () => {
    const w = extractWindow(stack, { x: 2.4, y: 2.6, z: 1 }, { x: 1, y: 1, z: 1 });
    expect(w.shape).toEqual([3, 3, 3]);
    expect(w.originPx).toEqual({ x: 1, y: 2, z: 0 });
    // voxel (z=1, y=3, x=2) is the centre: index (1*5 + 3)*6 + 2 = 50
    expect(w.data[(1 * 3 + 1) * 3 + 1]).toBe(50);
  });

  it("fills voxels outside the stack with NaN and leaves the input alone", () => {
    const before = stack.data.slice();
    const w = extractWindow(stack, { x: 0, y: 0, z: 0 }, { x: 1, y: 1, z: 1 });
    expect(Number.isNaN(w.data[0])).toBe(true);
    expect(w.data[(1 * 3 + 1) * 3 + 1]).toBe(0);
    expect(stack.data).toEqual(before);
  });

  it("names a bad half-size", () => {
    expect(() => extractWindow(stack, { x: 1, y: 1, z: 1 }, { x: 1.5, y: 1, z: 1 })).toThrow(
      /halfSizePx.x must be a whole number/,
    );
  });
});
