/**
 * PackBits (Macintosh run-length) decoder for TIFF compression 32773.
 */

/**
 * Decode one PackBits-compressed strip or tile into `out`.
 *
 * @param input - the compressed bytes of one strip/tile
 * @param out - destination sized to the expected decoded length; extra output is dropped
 * @returns the number of bytes written
 *
 * Notes: a header byte n in 0..127 copies the next n+1 bytes literally; n in -127..-1 repeats the
 * next byte 1-n times; -128 is a no-op. Truncated input simply ends the output early.
 * References: TIFF 6.0 specification, section 9 "PackBits Compression".
 *
 * @example
 * decodePackbits(Uint8Array.of(0xfe, 7), new Uint8Array(3)); // → 3, out = [7, 7, 7]
 */
export function decodePackbits(input: Uint8Array, out: Uint8Array): number {
  const inLen = input.length;
  const outLen = out.length;
  let i = 0;
  let o = 0;
  while (i < inLen && o < outLen) {
    const h = input[i++];
    if (h < 128) {
      const n = Math.min(h + 1, inLen - i, outLen - o);
      out.set(input.subarray(i, i + n), o);
      i += h + 1;
      o += n;
    } else if (h > 128) {
      if (i >= inLen) break;
      const n = Math.min(257 - h, outLen - o);
      out.fill(input[i++], o, o + n);
      o += n;
    }
  }
  return o;
}
