/**
 * Decode one planned TIFF page into its slot of the stack's byte buffer.
 */
import { applyPredictor } from "./apply-predictor";
import { decodeDeflate, type InflateFunction } from "./decode-deflate";
import { decodeLzw } from "./decode-lzw";
import { decodePackbits } from "./decode-packbits";
import type { PageLayout } from "./plan-tiff-stack";
import { TiffInputError } from "./tiff-input-error";

/**
 * Decode all strips or tiles of one page into `out` at byte `outOffset`, in the machine's
 * (little-endian) byte order.
 *
 * @param file - the whole TIFF file
 * @param page - the page's layout from `planTiffStack` (ranges already checked inside `file`)
 * @param littleEndian - the file's byte order
 * @param out - the stack's bytes
 * @param outOffset - byte offset of this page's plane in `out` (a multiple of the sample size)
 * @param scratch - optional reusable buffer for tiles
 * @param inflate - optional replacement Deflate decoder (e.g. a native zlib binding supplied by
 *   the caller); @default {@link decodeDeflate} (fflate, pure JS)
 * @returns the scratch buffer (possibly grown) for reuse on the next page
 * @throws {TiffInputError} `corrupt_data` when a strip/tile decodes to fewer bytes than it must,
 *   `truncated` when an uncompressed strip is short, `unsupported_compression`
 *
 * Notes: stripped pages decode straight into `out` (a strip is a contiguous run of rows); tiled
 * pages decode each tile into `scratch` and copy the rows that lie inside the image.
 * Byte swapping happens before predictor 2 (the predictor works on sample values) and after
 * predictor 3 (which reassembles the float bytes in the file's byte order).
 * References: TIFF 6.0 specification, sections 3 (strips), 14 (predictor), 15 (tiles).
 *
 * @example
 * decodePage(file, plan.pages[z], plan.structure.littleEndian, stackBytes, z * planeBytes);
 */
export function decodePage(
  file: Uint8Array,
  page: PageLayout,
  littleEndian: boolean,
  out: Uint8Array,
  outOffset: number,
  scratch: Uint8Array | null = null,
  inflate: InflateFunction = decodeDeflate,
): Uint8Array | null {
  const { width, height, bytesPerSample: bps, offsets, byteCounts } = page;
  const rowBytes = width * bps;
  // Predictor 2 works on sample values, so swap first; predictor 3 reassembles bytes in the
  // file's byte order (checked against libtiff's tiffcp -B output), so swap after it.
  const swap = !littleEndian && bps > 1 && page.predictor !== 3;
  const swapAfter = !littleEndian && bps > 1 && page.predictor === 3;
  if (page.tileWidth === 0) {
    const rps = page.rowsPerStrip;
    for (let s = 0; s < offsets.length; s++) {
      const rows = Math.min(rps, height - s * rps);
      const expected = rows * rowBytes;
      const dst = out.subarray(outOffset + s * rps * rowBytes, outOffset + s * rps * rowBytes + expected);
      const src = chunk(file, offsets[s], byteCounts ? byteCounts[s] : expected);
      decodeChunk(src, dst, page, s, inflate);
      if (swap) swapBytes(dst, bps);
      if (page.predictor !== 1) {
        const restored = applyPredictor(dst, page.predictor, width, rows, bps);
        if (restored !== dst) dst.set(restored);
        if (swapAfter) swapBytes(dst, bps);
      }
    }
    return scratch;
  }
  const tw = page.tileWidth;
  const th = page.tileHeight;
  const tileBytes = tw * th * bps;
  const buf =
    scratch && scratch.byteLength >= tileBytes ? scratch.subarray(0, tileBytes) : new Uint8Array(tileBytes);
  const across = Math.ceil(width / tw);
  for (let k = 0; k < offsets.length; k++) {
    const tx = (k % across) * tw;
    const ty = Math.floor(k / across) * th;
    buf.fill(0);
    const src = chunk(file, offsets[k], byteCounts ? byteCounts[k] : tileBytes);
    decodeChunk(src, buf, page, k, inflate);
    if (swap) swapBytes(buf, bps);
    let tile = buf;
    if (page.predictor !== 1) tile = applyPredictor(buf, page.predictor, tw, th, bps);
    if (swapAfter) swapBytes(tile, bps);
    const copyBytes = Math.min(tw, width - tx) * bps;
    const rows = Math.min(th, height - ty);
    for (let r = 0; r < rows; r++) {
      const from = r * tw * bps;
      out.set(tile.subarray(from, from + copyBytes), outOffset + (ty + r) * rowBytes + tx * bps);
    }
  }
  return scratch && scratch.byteLength >= tileBytes ? scratch : buf;
}

function chunk(file: Uint8Array, offset: number, count: number): Uint8Array {
  return file.subarray(offset, offset + count);
}

function decodeChunk(
  src: Uint8Array,
  dst: Uint8Array,
  page: PageLayout,
  k: number,
  inflate: InflateFunction,
): void {
  let n: number;
  switch (page.compression) {
    case 1:
      n = Math.min(src.length, dst.length);
      dst.set(n === src.length ? src : src.subarray(0, n));
      if (n < dst.length) {
        throw new TiffInputError(
          "truncated",
          `Uncompressed strip/tile ${k} of page ${page.ifdIndex} holds ${src.length} bytes; ${dst.length} are needed.`,
          { page: page.ifdIndex, chunk: k },
        );
      }
      return;
    case 5:
      n = decodeLzw(src, dst);
      break;
    case 8:
    case 32946:
      try {
        n = inflate(src, dst);
      } catch (e) {
        if (e instanceof TiffInputError) throw e;
        throw new TiffInputError(
          "corrupt_data",
          `Deflate data of strip/tile ${k} of page ${page.ifdIndex} could not be inflated.`,
          { page: page.ifdIndex, chunk: k },
        );
      }
      break;
    case 32773:
      n = decodePackbits(src, dst);
      break;
    default:
      throw new TiffInputError(
        "unsupported_compression",
        `TIFF compression ${page.compression} is not supported.`,
        { compression: page.compression },
      );
  }
  if (n < dst.length) {
    throw new TiffInputError(
      "corrupt_data",
      `Strip/tile ${k} of page ${page.ifdIndex} decoded to ${n} bytes; ${dst.length} were expected.`,
      { page: page.ifdIndex, chunk: k, decoded: n, expected: dst.length },
    );
  }
}

/** Reverse the byte order of each 2- or 4-byte sample in place (big-endian file → little-endian machine). */
function swapBytes(b: Uint8Array, bps: number): void {
  if (bps === 2) {
    if ((b.byteOffset & 1) === 0) {
      const a = new Uint16Array(b.buffer, b.byteOffset, b.length >> 1);
      for (let i = 0; i < a.length; i++) {
        const v = a[i];
        a[i] = ((v & 0xff) << 8) | (v >>> 8);
      }
    } else {
      for (let i = 0; i + 1 < b.length; i += 2) {
        const t = b[i];
        b[i] = b[i + 1];
        b[i + 1] = t;
      }
    }
  } else if (bps === 4) {
    for (let i = 0; i + 3 < b.length; i += 4) {
      const t0 = b[i];
      const t1 = b[i + 1];
      b[i] = b[i + 3];
      b[i + 1] = b[i + 2];
      b[i + 2] = t1;
      b[i + 3] = t0;
    }
  }
}
