/**
 * The one in-memory representation of a z-stack shared by `lib/tiff`, `lib/psf`
 * and the worker. Axes are always ordered (z, y, x) = (plane, row, column), and
 * the voxel at (z, y, x) lives at `data[(z * ny + y) * nx + x]`.
 */
export type StackDtype = "uint8" | "uint16" | "uint32" | "float32";

export type StackData = Uint8Array | Uint16Array | Uint32Array | Float32Array;

/** Physical voxel size in micrometres (x and y lateral, z the nominal focus step). */
export interface VoxelSizeUm {
  x: number;
  y: number;
  z: number;
}

export interface Stack {
  /** Voxel values, row-major (z, y, x). */
  data: StackData;
  /** [nz, ny, nx] */
  shape: [number, number, number];
  dtype: StackDtype;
  /** Null when neither the file nor the user gave a voxel size. */
  voxelSizeUm: VoxelSizeUm | null;
}

/** Largest representable value of an integer dtype (the saturation level); Infinity for float. */
export function dtypeMaximum(dtype: StackDtype): number {
  switch (dtype) {
    case "uint8":
      return 255;
    case "uint16":
      return 65535;
    case "uint32":
      return 4294967295;
    case "float32":
      return Number.POSITIVE_INFINITY;
  }
}
