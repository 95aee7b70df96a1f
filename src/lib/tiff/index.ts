/**
 * `lib/tiff`: TIFF z-stack reading and metadata (ImageJ description, OME-XML, resolution tags).
 */
export { dtypeMaximum } from "./stack";
export type { Stack, StackData, StackDtype, VoxelSizeUm } from "./stack";
export { readTiffStack } from "./read-tiff-stack";
export type { ReadTiffStackOptions, TiffStackResult } from "./read-tiff-stack";
export { inspectTiff } from "./inspect-tiff";
export type { TiffReadOptions } from "./plan-tiff-stack";
export { mergeUserMetadata } from "./merge-user-metadata";
export type { UserMetadataValues } from "./merge-user-metadata";
export { voxelSizeFromMetadata } from "./voxel-size-from-metadata";
export { TiffInputError } from "./tiff-input-error";
export type { TiffErrorCode } from "./tiff-input-error";
export type { MetadataSource, Sourced, TiffMetadata, TiffWarning, TiffWarningCode } from "./tiff-metadata";
export { parseImageJDescription } from "./parse-imagej-description";
export type { ImageJDescription } from "./parse-imagej-description";
export { parseOmeXml } from "./parse-ome-xml";
export type { OmeChannel, OmeMetadata } from "./parse-ome-xml";
export { lengthToUm } from "./length-to-um";
export { decodeLzw } from "./decode-lzw";
export { decodePackbits } from "./decode-packbits";
export { decodeDeflate } from "./decode-deflate";
export type { InflateFunction } from "./decode-deflate";
export { applyPredictor } from "./apply-predictor";
export { maxProjection, toGreyThumbnail } from "./max-projection";
export type { FloatImage, GreyThumbnail, GreyThumbnailOptions } from "./max-projection";
export { buildOmeXml, writeOmeTiff } from "./write-ome-tiff";
export type { OmeTiffVolume, WriteOmeTiffOptions } from "./write-ome-tiff";
