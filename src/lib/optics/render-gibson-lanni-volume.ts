import {
  createGibsonLanniModel,
  getGibsonLanniPupilTable,
  gibsonLanniAmplitudes,
  gibsonLanniNodeCount,
  gibsonLanniUniformScan,
  type GibsonLanniModel,
} from "./gibson-lanni-model";
import type { GibsonLanniParams } from "./gibson-lanni-params";

/** Options of {@link renderGibsonLanniVolume}. */
export interface RenderGibsonLanniVolumeOptions {
  /** Output shape [nz, ny, nx] (planes, rows, columns). */
  shape: [number, number, number];
  /** Voxel size, µm: x and y lateral, z the nominal focus step between planes. */
  voxelSizeUm: { x: number; y: number; z: number };
  /** Depth z_p of the point source beyond the coverslip (actual depth), µm. */
  particleDepthUm: number;
  /**
   * Nominal focus position of plane 0, µm below the coverslip reference (positive = deeper).
   * Plane k is imaged at nominal focus firstPlaneNominalFocusUm + k·voxelSizeUm.z, i.e. at
   * focus offset z = −(that value) in METHODS §3 terms.
   */
  firstPlaneNominalFocusUm: number;
  /** Lateral position of the source, in pixels (column x, row y; sub-pixel allowed). @default centre of the image */
  centerPx?: { x: number; y: number };
  /** Radial samples per smallest lateral pixel for the 1D radial grid. @default 4 */
  radialOversampling?: number;
  /** Fixed Gauss–Legendre order; default: adaptive, largest needed over the volume. */
  nodeCount?: number;
}

/** A rendered PSF volume (same layout as the shared Stack type of lib/tiff). */
export interface GibsonLanniVolume {
  /** Intensities relative to the ideal in-focus peak, row-major (z, y, x). */
  data: Float32Array;
  /** [nz, ny, nx] */
  shape: [number, number, number];
  /** Voxel size, µm. */
  voxelSizeUm: { x: number; y: number; z: number };
  /** Nominal focus position of each plane, µm (positive = deeper). */
  nominalFocusUm: Float64Array;
  /** Gauss–Legendre order used. */
  nodeCount: number;
}

/**
 * Render the Gibson–Lanni PSF of a point source on a (z, y, x) voxel grid (noise-free, pixel
 * centres sampled, no pixel integration).
 *
 * Notes: for each plane the intensity is computed on a 1D radial grid (spacing = smallest lateral
 * pixel / radialOversampling, out to the farthest corner) and linearly interpolated onto pixel
 * centres, because the PSF is rotationally symmetric (METHODS §3). The J₀ amplitudes of the radial
 * grid are computed once, and each radius is swept through all (equally spaced) planes by phasor
 * rotation. Pixel (x, y) has its centre at (x, y) px.
 *
 * References: Gibson & Lanni, JOSA A 8(10):1601 (1991); METHODS.md §3.
 *
 * @param modelOrParams - prepared model or raw parameters
 * @param options - grid, voxel size (µm), source depth and lateral position
 * @returns the volume with Float32 data normalised to the ideal in-focus peak
 * @throws RangeError for a non-positive shape or voxel size
 * @example
 * renderGibsonLanniVolume(model, { shape: [41, 32, 32], voxelSizeUm: { x: 0.065, y: 0.065, z: 0.1 },
 *   particleDepthUm: 5, firstPlaneNominalFocusUm: 4 })
 */
export function renderGibsonLanniVolume(
  modelOrParams: GibsonLanniModel | GibsonLanniParams,
  options: RenderGibsonLanniVolumeOptions,
): GibsonLanniVolume {
  const model = createGibsonLanniModel(modelOrParams);
  const { shape, voxelSizeUm, particleDepthUm, firstPlaneNominalFocusUm, radialOversampling = 4 } = options;
  const [nz, ny, nx] = shape;
  for (const [name, value] of [
    ["nz", nz],
    ["ny", ny],
    ["nx", nx],
  ] as const) {
    if (!Number.isInteger(value) || value < 1) {
      throw new RangeError(`renderGibsonLanniVolume: shape ${name} must be an integer ≥ 1, got ${value}`);
    }
  }
  for (const axis of ["x", "y", "z"] as const) {
    if (!(voxelSizeUm[axis] > 0) || !Number.isFinite(voxelSizeUm[axis])) {
      throw new RangeError(
        `renderGibsonLanniVolume: voxelSizeUm.${axis} must be > 0, got ${voxelSizeUm[axis]}`,
      );
    }
  }
  if (!Number.isFinite(particleDepthUm) || particleDepthUm < 0) {
    throw new RangeError(
      `renderGibsonLanniVolume: particleDepthUm must be finite and ≥ 0, got ${particleDepthUm}`,
    );
  }
  if (!(radialOversampling >= 1)) {
    throw new RangeError(
      `renderGibsonLanniVolume: radialOversampling must be ≥ 1, got ${radialOversampling}`,
    );
  }
  const { centerPx = { x: (nx - 1) / 2, y: (ny - 1) / 2 } } = options;
  const nominalFocusUm = new Float64Array(nz);
  for (let k = 0; k < nz; k++) nominalFocusUm[k] = firstPlaneNominalFocusUm + k * voxelSizeUm.z;

  // Radial grid out to the farthest pixel corner.
  const dxMax = Math.max(centerPx.x, nx - 1 - centerPx.x) * voxelSizeUm.x;
  const dyMax = Math.max(centerPx.y, ny - 1 - centerPx.y) * voxelSizeUm.y;
  const maxRadiusUm = Math.hypot(dxMax, dyMax);
  const stepUm = Math.min(voxelSizeUm.x, voxelSizeUm.y) / radialOversampling;
  const nr = Math.max(2, Math.ceil(maxRadiusUm / stepUm) + 2);

  let { nodeCount } = options;
  if (nodeCount === undefined) {
    nodeCount = 0;
    for (const k of [0, nz - 1]) {
      nodeCount = Math.max(
        nodeCount,
        gibsonLanniNodeCount(model, {
          radiusUm: maxRadiusUm,
          focusOffsetUm: -nominalFocusUm[k],
          particleDepthUm,
        }),
      );
    }
  }
  const table = getGibsonLanniPupilTable(model, nodeCount);
  // Planes are equally spaced in focus, so each radius gets one fast uniform scan over all planes.
  const columns: Float64Array[] = [];
  for (let i = 0; i < nr; i++) {
    const amplitudes = gibsonLanniAmplitudes(model, table, i * stepUm);
    columns.push(
      gibsonLanniUniformScan(table, amplitudes, -nominalFocusUm[0], -voxelSizeUm.z, nz, particleDepthUm),
    );
  }

  // Distance of each pixel from the source, in radial-grid units (same for every plane).
  const radialIndex = new Float64Array(ny * nx);
  for (let y = 0; y < ny; y++) {
    const dy = (y - centerPx.y) * voxelSizeUm.y;
    for (let x = 0; x < nx; x++) {
      const dx = (x - centerPx.x) * voxelSizeUm.x;
      radialIndex[y * nx + x] = Math.hypot(dx, dy) / stepUm;
    }
  }

  const data = new Float32Array(nz * ny * nx);
  const radial = new Float64Array(nr);
  for (let k = 0; k < nz; k++) {
    for (let i = 0; i < nr; i++) radial[i] = columns[i][k];
    const offset = k * ny * nx;
    for (let p = 0; p < ny * nx; p++) {
      const u = radialIndex[p];
      const i0 = Math.min(nr - 2, Math.floor(u));
      const t = u - i0;
      data[offset + p] = radial[i0] * (1 - t) + radial[i0 + 1] * t;
    }
  }
  return { data, shape: [nz, ny, nx], voxelSizeUm: { ...voxelSizeUm }, nominalFocusUm, nodeCount };
}
