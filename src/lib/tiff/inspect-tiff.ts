/**
 * Cheap header-only look at a TIFF stack, for form prefill and fast refusal.
 */
import { planTiffStack, type TiffReadOptions } from "./plan-tiff-stack";
import type { TiffMetadata } from "./tiff-metadata";
import { toBytes } from "./to-bytes";

/**
 * Parse only the headers and metadata of a TIFF z-stack (no pixel decoding).
 *
 * @param input - the whole file
 * @param options - channel/frame selection and limits, as for `readTiffStack`
 * @returns the metadata record `readTiffStack` would return for the same options
 * @throws {TiffInputError} every code `readTiffStack` throws except `corrupt_data` (found only
 *   while decoding): the same limits, page-consistency and strip-range checks are made
 *
 * Notes: cost is proportional to the number of pages, not to the pixel data.
 * References: see `planTiffStack`.
 *
 * @example
 * const meta = await inspectTiff(bytes);
 * if (meta.voxelSizeUm.z === null) askUserForZStep();
 */
export async function inspectTiff(
  input: ArrayBuffer | Uint8Array,
  options: TiffReadOptions = {},
): Promise<TiffMetadata> {
  const { metadata } = await planTiffStack(toBytes(input), options);
  return metadata;
}
