/**
 * Apply values a user typed in (upload form, API `meta`) over a file's metadata record.
 */
import type { VoxelSizeUm } from "./stack";
import type { Sourced, TiffMetadata, TiffWarningCode } from "./tiff-metadata";

/** Values a user may supply; each one given replaces the file's value with source `"user"`. */
export interface UserMetadataValues {
  /** Per-axis voxel size, µm. */
  voxelSizeUm?: Partial<VoxelSizeUm>;
  numericalAperture?: number;
  immersion?: string;
  magnification?: number;
  immersionRefractiveIndex?: number;
  /** nm */
  emissionWavelengthNm?: number;
  /** nm */
  excitationWavelengthNm?: number;
  /** µm */
  pinholeSizeUm?: number;
  acquisitionMode?: string;
  /** °C */
  temperatureC?: number;
  acquisitionDate?: string;
}

/**
 * Merge user-entered values into a metadata record (the input is not modified).
 *
 * @param metadata - from `inspectTiff` or `readTiffStack`
 * @param userValues - values to apply; undefined fields leave the file's value in place
 * @returns a new record with those values sourced `"user"` and the warnings they resolve removed
 * @throws {RangeError} when a voxel size, NA, magnification, refractive index, wavelength or
 *   pinhole is not a positive finite number
 *
 * @example
 * const m = mergeUserMetadata(metadata, { voxelSizeUm: { z: 0.2 } });
 * m.voxelSizeUm.z; // { value: 0.2, source: "user" }
 */
export function mergeUserMetadata(metadata: TiffMetadata, userValues: UserMetadataValues): TiffMetadata {
  const positive = (name: string, v: number | undefined): Sourced<number> | undefined => {
    if (v === undefined) return undefined;
    if (typeof v !== "number" || !Number.isFinite(v) || v <= 0)
      throw new RangeError(`${name} must be a positive finite number (got ${String(v)}).`);
    return { value: v, source: "user" };
  };
  const text = (v: string | undefined): Sourced<string> | undefined =>
    v === undefined ? undefined : { value: v, source: "user" };
  const finite = (name: string, v: number | undefined): Sourced<number> | undefined => {
    if (v === undefined) return undefined;
    if (typeof v !== "number" || !Number.isFinite(v))
      throw new RangeError(`${name} must be a finite number (got ${String(v)}).`);
    return { value: v, source: "user" };
  };
  const u = userValues;
  const vs = u.voxelSizeUm ?? {};
  const voxelSizeUm = {
    x: positive("voxelSizeUm.x", vs.x) ?? metadata.voxelSizeUm.x,
    y: positive("voxelSizeUm.y", vs.y) ?? metadata.voxelSizeUm.y,
    z: positive("voxelSizeUm.z", vs.z) ?? metadata.voxelSizeUm.z,
  };
  const resolved = new Set<TiffWarningCode>();
  if (voxelSizeUm.x && voxelSizeUm.y) resolved.add("no_pixel_size");
  if (voxelSizeUm.z) resolved.add("no_z_spacing");
  return {
    ...metadata,
    voxelSizeUm,
    numericalAperture: positive("numericalAperture", u.numericalAperture) ?? metadata.numericalAperture,
    immersion: text(u.immersion) ?? metadata.immersion,
    magnification: positive("magnification", u.magnification) ?? metadata.magnification,
    immersionRefractiveIndex:
      positive("immersionRefractiveIndex", u.immersionRefractiveIndex) ?? metadata.immersionRefractiveIndex,
    emissionWavelengthNm:
      positive("emissionWavelengthNm", u.emissionWavelengthNm) ?? metadata.emissionWavelengthNm,
    excitationWavelengthNm:
      positive("excitationWavelengthNm", u.excitationWavelengthNm) ?? metadata.excitationWavelengthNm,
    pinholeSizeUm: positive("pinholeSizeUm", u.pinholeSizeUm) ?? metadata.pinholeSizeUm,
    acquisitionMode: text(u.acquisitionMode) ?? metadata.acquisitionMode,
    temperatureC: finite("temperatureC", u.temperatureC) ?? metadata.temperatureC,
    acquisitionDate: text(u.acquisitionDate) ?? metadata.acquisitionDate,
    warnings: metadata.warnings.filter((w) => !resolved.has(w.code)),
  };
}
