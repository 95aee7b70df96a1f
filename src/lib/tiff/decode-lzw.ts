/**
 * TIFF LZW decoder writing straight into a caller-given buffer.
 */
import { TiffInputError } from "./tiff-input-error";

const CLEAR = 256;
const EOI = 257;
const TABLE_SIZE = 4096;

/**
 * Decode one TIFF LZW-compressed strip or tile into `out`.
 *
 * @param input - the compressed bytes of one strip/tile
 * @param out - destination, sized to the expected decoded length; output beyond it is dropped
 * @returns the number of bytes written to `out`
 * @throws {TiffInputError} `corrupt_data` for an invalid code, or for the pre-6.0 (LSB-first) variant
 *
 * Notes: codes are 9–12 bits, packed most-significant-bit first; code 256 clears the table,
 * 257 ends the data; the code width grows one code early ("early change": at 511, 1023, 2047).
 * Each table entry is stored as (offset, length) into the output already written: a new entry is
 * the previous code's string plus the first byte of the current one, which sits right after it in
 * the output, so no string is ever copied into the table.
 * References: TIFF 6.0 specification, section 13 "LZW Compression" (from memory for the early-change detail).
 *
 * @example
 * const written = decodeLzw(stripBytes, new Uint8Array(rowsPerStrip * rowBytes));
 */
export function decodeLzw(input: Uint8Array, out: Uint8Array): number {
  const inLen = input.length;
  if (inLen >= 2 && input[0] === 0 && (input[1] & 1) === 1) {
    // Source: TIFF 6.0 specification, section 13 — old-style LSB-first LZW starts 0x00 0x01 (from memory).
    throw new TiffInputError(
      "unsupported_compression",
      "Old-style (pre-TIFF 6.0, LSB-first) LZW data is not supported.",
    );
  }
  const outLen = out.length;
  const entryOffset = new Int32Array(TABLE_SIZE);
  const entryLength = new Int32Array(TABLE_SIZE);
  let nextCode = 258;
  let codeWidth = 9;
  let bitBuf = 0;
  let bitCount = 0;
  let inPos = 0;
  let outPos = 0;
  // Where the previous code's string was emitted, and its length (-1: none since a clear).
  let prevStart = -1;
  let prevLen = 0;
  while (outPos < outLen) {
    while (bitCount < codeWidth) {
      // libtiff tolerates strips that end without an EOI code; so do we.
      if (inPos >= inLen) return outPos;
      bitBuf = ((bitBuf << 8) | input[inPos++]) >>> 0;
      bitCount += 8;
    }
    const code = (bitBuf >>> (bitCount - codeWidth)) & ((1 << codeWidth) - 1);
    bitCount -= codeWidth;
    bitBuf &= (1 << bitCount) - 1;
    if (code === EOI) return outPos;
    if (code === CLEAR) {
      nextCode = 258;
      codeWidth = 9;
      prevStart = -1;
      continue;
    }
    const start = outPos;
    let len: number;
    if (code < 256) {
      out[outPos] = code;
      len = 1;
    } else if (prevStart < 0) {
      throw new TiffInputError("corrupt_data", `LZW data (re)starts with code ${code}, not a literal.`, {
        code,
      });
    } else if (code < nextCode) {
      const src = entryOffset[code];
      len = entryLength[code];
      if (outPos + len > outLen) len = outLen - outPos;
      if (len < 16) for (let k = 0; k < len; k++) out[outPos + k] = out[src + k];
      else out.copyWithin(outPos, src, src + len);
      len = entryLength[code];
    } else if (code === nextCode) {
      // KwKwK: the previous string followed by its own first byte.
      len = prevLen + 1;
      const lim = Math.min(prevLen, outLen - outPos);
      for (let k = 0; k < lim; k++) out[outPos + k] = out[prevStart + k];
      if (outPos + prevLen < outLen) out[outPos + prevLen] = out[prevStart];
    } else {
      throw new TiffInputError(
        "corrupt_data",
        `LZW code ${code} is beyond the table (next free code ${nextCode}).`,
        { code, nextCode },
      );
    }
    outPos += len;
    if (prevStart >= 0) {
      if (nextCode < TABLE_SIZE) {
        // New entry = previous string + first byte of this one, which directly follows it in `out`.
        entryOffset[nextCode] = prevStart;
        entryLength[nextCode] = prevLen + 1;
        nextCode++;
      }
      // Source: TIFF 6.0 specification, section 13: widths switch one code early (at 511, 1023, 2047).
      if (nextCode + 1 >= 1 << codeWidth && codeWidth < 12) codeWidth++;
    }
    prevStart = start;
    prevLen = len;
  }
  return outLen;
}
