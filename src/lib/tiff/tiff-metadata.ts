/**
 * The metadata record returned with every TIFF stack: each value says where it came from.
 */
import type { StackDtype } from "./stack";

/** Where a metadata value came from. */
export type MetadataSource = "ome-xml" | "imagej" | "resolution-tag" | "user" | "default";

/** A value with its provenance. */
export interface Sourced<T> {
  value: T;
  source: MetadataSource;
}

/** Stable warning kinds; the message is for people. */
export type TiffWarningCode =
  | "no_pixel_size"
  | "no_z_spacing"
  | "uncalibrated_resolution"
  | "extra_pages"
  | "ignored_metadata"
  | "reduced_resolution_pages";

/** A non-fatal finding about the file (e.g. "no z-spacing in the file: enter it"). */
export interface TiffWarning {
  code: TiffWarningCode;
  message: string;
}

/** Everything `inspectTiff`/`readTiffStack` know about a file and the selected sub-stack. */
export interface TiffMetadata {
  /** Which metadata convention the file follows. */
  format: "ome-tiff" | "imagej" | "plain";
  byteOrder: "little-endian" | "big-endian";
  bigTiff: boolean;
  /** Number of IFDs (pages) in the file, reduced-resolution pages included. */
  pageCount: number;
  /** Pixels per row (x). */
  width: number;
  /** Rows (y). */
  height: number;
  dtype: StackDtype;
  /** "none" | "lzw" | "deflate" | "packbits" (of the first page). */
  compression: string;
  /** TIFF predictor of the first page (1 none, 2 horizontal, 3 floating point). */
  predictor: number;
  /** True when the first page is stored in tiles rather than strips. */
  tiled: boolean;
  /** Channel count of the file. */
  channels: Sourced<number>;
  /** z-slices per channel and frame (the stack depth). */
  slices: Sourced<number>;
  /** Time points. */
  frames: Sourced<number>;
  /** Plane order in the file, fastest first after XY (e.g. `XYCZT` for ImageJ hyperstacks). */
  dimensionOrder: Sourced<string>;
  /** The selected channel (0-based). */
  channel: number;
  /** The selected frame (0-based). */
  frame: number;
  /** Declared bytes of the selected stack once decoded. */
  stackBytes: number;
  /** Voxel size in µm; null per axis where unknown. */
  voxelSizeUm: { x: Sourced<number> | null; y: Sourced<number> | null; z: Sourced<number> | null };
  /** Objective numerical aperture (OME `Objective@LensNA`). */
  numericalAperture: Sourced<number> | null;
  /** Objective immersion (OME `Objective@Immersion`, e.g. `Oil`). */
  immersion: Sourced<string> | null;
  /** Objective nominal magnification. */
  magnification: Sourced<number> | null;
  /** Immersion medium refractive index (OME `ObjectiveSettings@RefractiveIndex`). */
  immersionRefractiveIndex: Sourced<number> | null;
  /** Emission wavelength of the selected channel, nm. */
  emissionWavelengthNm: Sourced<number> | null;
  /** Excitation wavelength of the selected channel, nm. */
  excitationWavelengthNm: Sourced<number> | null;
  /** Physical pinhole diameter of the selected channel, µm. */
  pinholeSizeUm: Sourced<number> | null;
  /** OME AcquisitionMode of the selected channel. */
  acquisitionMode: Sourced<string> | null;
  /** Specimen temperature, °C. */
  temperatureC: Sourced<number> | null;
  /** Acquisition date as written in the file (ISO 8601). */
  acquisitionDate: Sourced<string> | null;
  warnings: TiffWarning[];
}
