/**
 * Deflate (zlib-wrapped) decoder for TIFF compression 8 (Adobe) and 32946 (old PKZIP-style code).
 */
import { inflateSync, unzlibSync } from "fflate";
import { TiffInputError } from "./tiff-input-error";

/**
 * A Deflate decoder: inflate a zlib stream `compressed` into `out` (truncating longer output)
 * and return the number of bytes written. {@link decodeDeflate} is the default; a caller may pass
 * a native one (e.g. built on node:zlib in the worker) through `readTiffStack`'s `inflate` option.
 */
export type InflateFunction = (compressed: Uint8Array, out: Uint8Array) => number;

/**
 * Inflate one Deflate-compressed strip or tile into `out`.
 *
 * @param input - the compressed bytes (a zlib stream; a raw deflate stream is accepted too)
 * @param out - destination sized to the expected decoded length; longer output is truncated
 * @returns the number of bytes written
 * @throws {TiffInputError} `corrupt_data` when the stream cannot be inflated
 *
 * Notes: uses fflate (pure JS). Both TIFF Deflate codes carry a zlib (RFC 1950) stream.
 * References: Adobe "TIFF Technical Note 2" (Deflate in TIFF) — from memory; RFC 1950/1951.
 *
 * @example
 * const n = decodeDeflate(stripBytes, new Uint8Array(expectedBytes));
 */
export function decodeDeflate(input: Uint8Array, out: Uint8Array): number {
  // A zlib header: CM = 8 and (CMF*256 + FLG) divisible by 31 (RFC 1950, section 2.2).
  const zlibHeader = input.length >= 2 && (input[0] & 0x0f) === 8 && ((input[0] << 8) | input[1]) % 31 === 0;
  // fflate returns the whole `out` untouched for an empty payload; report 0 bytes instead.
  if (input.length <= (zlibHeader ? 6 : 0)) return 0;
  try {
    const result = zlibHeader ? unzlibSync(input, { out }) : inflateSync(input, { out });
    if (result.buffer !== out.buffer || result.byteOffset !== out.byteOffset) {
      out.set(result.subarray(0, Math.min(result.length, out.length)));
    }
    return Math.min(result.length, out.length);
  } catch (e) {
    if (e instanceof TiffInputError) throw e;
    throw new TiffInputError(
      "corrupt_data",
      `Deflate data could not be inflated (${e instanceof Error ? e.message : String(e)}).`,
    );
  }
}
