/**
 * Undo the TIFF horizontal-differencing predictors in place.
 */
import { TiffInputError } from "./tiff-input-error";

/**
 * Undo predictor 2 (horizontal differencing) or 3 (floating-point) on decoded rows, in place.
 *
 * @param bytes - the decoded rows of one strip or tile, `rows × width` samples, already in the
 *   machine's byte order for predictor 2 (after any byte swap), in file layout for predictor 3
 *   (whose result is in the machine's order for little-endian files, swapped for big-endian ones)
 * @param predictor - 1 (none), 2 or 3
 * @param width - samples per row (the tile width for tiles)
 * @param rows - number of rows
 * @param bytesPerSample - 1, 2 or 4
 * @returns the buffer holding the restored samples in the machine's byte order: `bytes` itself for
 *   predictors 1 and 2; for predictor 3 a new buffer
 * @throws {TiffInputError} `unsupported_compression` for other predictor values or combinations
 *
 * Notes: predictor 2 stores each sample as the difference from its left neighbour (modulo 2^bits);
 * predictor 3 splits each row's float samples into byte planes (most significant first) and
 * byte-differences them.
 * References: TIFF 6.0 specification, section 14 "Differencing Predictor"; Adobe Photoshop TIFF
 * Technical Note 3 (floating-point predictor) — from memory.
 *
 * @example
 * applyPredictor(rowBytes, 2, 64, 1, 2);
 */
export function applyPredictor(
  bytes: Uint8Array,
  predictor: number,
  width: number,
  rows: number,
  bytesPerSample: number,
): Uint8Array {
  if (predictor === 1) return bytes;
  if (predictor === 2) {
    if (bytesPerSample === 1) {
      for (let r = 0; r < rows; r++) {
        const base = r * width;
        for (let i = base + 1; i < base + width; i++) bytes[i] = (bytes[i] + bytes[i - 1]) & 0xff;
      }
    } else if (bytesPerSample === 2) {
      const a = new Uint16Array(bytes.buffer, bytes.byteOffset, rows * width);
      for (let r = 0; r < rows; r++) {
        const base = r * width;
        let acc = a[base];
        for (let i = base + 1; i < base + width; i++) a[i] = acc = (acc + a[i]) & 0xffff;
      }
    } else if (bytesPerSample === 4) {
      const a = new Uint32Array(bytes.buffer, bytes.byteOffset, rows * width);
      for (let r = 0; r < rows; r++) {
        const base = r * width;
        for (let i = base + 1; i < base + width; i++) a[i] = (a[i] + a[i - 1]) >>> 0;
      }
    } else {
      throw new TiffInputError(
        "unsupported_compression",
        `Predictor 2 with ${bytesPerSample * 8}-bit samples is not supported.`,
      );
    }
    return bytes;
  }
  if (predictor === 3) {
    if (bytesPerSample !== 4) {
      throw new TiffInputError(
        "unsupported_compression",
        `Floating-point predictor with ${bytesPerSample * 8}-bit samples is not supported.`,
      );
    }
    const rowBytes = width * 4;
    const out = new Uint8Array(rows * rowBytes);
    for (let r = 0; r < rows; r++) {
      const base = r * rowBytes;
      for (let i = base + 1; i < base + rowBytes; i++) bytes[i] = (bytes[i] + bytes[i - 1]) & 0xff;
      // Byte planes: for a little-endian file the first plane is the most significant byte; the
      // result is written little-endian. For a big-endian file this yields byte-swapped floats,
      // which the caller swaps back (matches libtiff's output, tested with tiffcp -B).
      for (let x = 0; x < width; x++) {
        const o = base + x * 4;
        out[o + 3] = bytes[base + x];
        out[o + 2] = bytes[base + width + x];
        out[o + 1] = bytes[base + 2 * width + x];
        out[o] = bytes[base + 3 * width + x];
      }
    }
    return out;
  }
  throw new TiffInputError("unsupported_compression", `Predictor ${predictor} is not supported.`, {
    predictor,
  });
}
