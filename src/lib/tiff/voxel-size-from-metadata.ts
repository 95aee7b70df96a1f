/**
 * Collapse the per-axis sourced voxel size of a metadata record to a `Stack` voxel size.
 */
import type { VoxelSizeUm } from "./stack";
import type { TiffMetadata } from "./tiff-metadata";

/**
 * The voxel size in µm when all three axes are known, else null.
 *
 * @param metadata - a metadata record from `inspectTiff`, `readTiffStack` or `mergeUserMetadata`
 * @returns `{ x, y, z }` in µm, or null if any axis is unknown
 *
 * @example
 * stack.voxelSizeUm = voxelSizeFromMetadata(mergeUserMetadata(metadata, { voxelSizeUm: { z: 0.2 } }));
 */
export function voxelSizeFromMetadata(metadata: TiffMetadata): VoxelSizeUm | null {
  const { x, y, z } = metadata.voxelSizeUm;
  return x && y && z ? { x: x.value, y: y.value, z: z.value } : null;
}
