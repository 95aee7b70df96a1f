import type { Stack } from "../tiff/stack";

/**
 * Copy a box of voxels centred on a (sub-voxel) position into a new Float32Array,
 * clipped at the stack's edges; voxels outside the stack are NaN.
 *
 * @param stack - the stack (z, y, x)
 * @param centrePx - centre in voxels, 0-based
 * @param halfSizePx - half-size of the box per axis in voxels (the box is 2·h + 1 wide)
 * @returns the box, shape [nz, ny, nx], and the voxel index of its first corner
 * @throws RangeError for a negative or non-integer half-size
 * @example extractWindow(stack, { x: 40.2, y: 31.7, z: 12.1 }, { x: 10, y: 10, z: 15 })
 */
export function extractWindow(
  stack: Stack,
  centrePx: { x: number; y: number; z: number },
  halfSizePx: { x: number; y: number; z: number },
): { data: Float32Array; shape: [number, number, number]; originPx: { x: number; y: number; z: number } } {
  for (const axis of ["x", "y", "z"] as const) {
    const h = halfSizePx[axis];
    if (!Number.isInteger(h) || h < 0)
      throw new RangeError(`halfSizePx.${axis} must be a whole number ≥ 0, got ${h}`);
  }
  const [sz, sy, sx] = stack.shape;
  const cx = Math.round(centrePx.x);
  const cy = Math.round(centrePx.y);
  const cz = Math.round(centrePx.z);
  const nx = 2 * halfSizePx.x + 1;
  const ny = 2 * halfSizePx.y + 1;
  const nz = 2 * halfSizePx.z + 1;
  const out = new Float32Array(nx * ny * nz).fill(Number.NaN);
  const ox = cx - halfSizePx.x;
  const oy = cy - halfSizePx.y;
  const oz = cz - halfSizePx.z;
  for (let k = 0; k < nz; k++) {
    const z = oz + k;
    if (z < 0 || z >= sz) continue;
    for (let j = 0; j < ny; j++) {
      const y = oy + j;
      if (y < 0 || y >= sy) continue;
      const src = (z * sy + y) * sx;
      const dst = (k * ny + j) * nx;
      for (let i = 0; i < nx; i++) {
        const x = ox + i;
        if (x >= 0 && x < sx) out[dst + i] = stack.data[src + x]!;
      }
    }
  }
  return { data: out, shape: [nz, ny, nx], originPx: { x: ox, y: oy, z: oz } };
}
