/**
 * A defensive walk over a TIFF's header and IFD chain, done before any other parser
 * (geotiff) is trusted with the bytes: it refuses loops, absurd counts and any entry
 * whose data would lie outside the file, so later parsing cannot hang or over-allocate.
 */
import { TiffInputError } from "./tiff-input-error";

/** One IFD entry as stored: tag, field type, count and absolute byte position of its value. */
export interface TiffEntry {
  tag: number;
  type: number;
  count: number;
  /** Absolute byte offset of the value (inline values point into the entry itself). */
  valueOffset: number;
}

/** One image file directory found by {@link scanTiffStructure}. */
export interface TiffIfd {
  /** Absolute byte offset of the directory. */
  offset: number;
  entries: Map<number, TiffEntry>;
}

/** What {@link scanTiffStructure} found: byte order, flavour and every IFD in chain order. */
export interface TiffStructure {
  littleEndian: boolean;
  bigTiff: boolean;
  ifds: TiffIfd[];
}

/** Options of {@link scanTiffStructure}. */
export interface ScanTiffStructureOptions {
  /** Refuse files whose IFD chain is longer than this. @default 65536 */
  maxPages?: number;
}

// Source: TIFF 6.0 specification, section 2 "Image File Directory" (field types 1–12);
// BigTIFF design notes for types 16–18 (LONG8, SLONG8, IFD8) — from memory.
const FIELD_TYPE_SIZES: Record<number, number> = {
  1: 1,
  2: 1,
  3: 2,
  4: 4,
  5: 8,
  6: 1,
  7: 1,
  8: 2,
  9: 4,
  10: 8,
  11: 4,
  12: 8,
  13: 4,
  16: 8,
  17: 8,
  18: 8,
};

/** Largest plausible number of entries in one IFD; real files carry a few dozen. */
const MAX_ENTRIES = 4096;

/**
 * Walk a TIFF's header and IFD chain and validate its structure.
 *
 * @param bytes - the whole file
 * @param options - see {@link ScanTiffStructureOptions}
 * @returns byte order, BigTIFF flag and the IFDs in chain order (at least one)
 * @throws {TiffInputError} `not_tiff`, `truncated`, `corrupt_ifd`, `ifd_loop`
 *
 * Notes: follows each "next IFD" offset with a visited set and a page cap; checks that every
 * directory table and every entry's value range lie inside the file and that field types are known.
 * References: TIFF 6.0 specification, section 2 (header, IFD layout); BigTIFF header
 * (magic 43, offset size 8) — from memory.
 *
 * @example
 * const { littleEndian, ifds } = scanTiffStructure(bytes); // ifds.length === page count
 */
export function scanTiffStructure(bytes: Uint8Array, options: ScanTiffStructureOptions = {}): TiffStructure {
  const { maxPages = 65536 } = options;
  const n = bytes.byteLength;
  const b0 = n > 0 ? bytes[0] : -1;
  const b1 = n > 1 ? bytes[1] : -1;
  const looksTiff = (b0 === 0x49 && b1 === 0x49) || (b0 === 0x4d && b1 === 0x4d);
  if (!looksTiff) {
    throw new TiffInputError(
      "not_tiff",
      n === 0 ? "The file is empty." : "The file is not a TIFF (no II/MM byte-order mark).",
      { bytes: n },
    );
  }
  // Source: TIFF 6.0 specification, section 2, "Image File Header": 8 bytes (BigTIFF: 16).
  if (n < 8)
    throw new TiffInputError("truncated", `The file is ${n} bytes long, shorter than a TIFF header.`, {
      bytes: n,
    });
  const littleEndian = b0 === 0x49;
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const magic = view.getUint16(2, littleEndian);
  let bigTiff: boolean;
  if (magic === 42) bigTiff = false;
  else if (magic === 43) bigTiff = true;
  else
    throw new TiffInputError(
      "not_tiff",
      `The file is not a TIFF (magic number ${magic}, expected 42 or 43).`,
      { magic },
    );
  if (bigTiff && n < 16)
    throw new TiffInputError("truncated", `The file is ${n} bytes long, shorter than a BigTIFF header.`, {
      bytes: n,
    });
  if (bigTiff && (view.getUint16(4, littleEndian) !== 8 || view.getUint16(6, littleEndian) !== 0)) {
    throw new TiffInputError("corrupt_ifd", "BigTIFF header with an offset size other than 8.");
  }
  const readOffset = (pos: number): number => {
    if (!bigTiff) return view.getUint32(pos, littleEndian);
    const v = view.getBigUint64(pos, littleEndian);
    return v > BigInt(Number.MAX_SAFE_INTEGER) ? Number.MAX_SAFE_INTEGER : Number(v);
  };
  const headerSize = bigTiff ? 16 : 8;
  const entrySize = bigTiff ? 20 : 12;
  const countSize = bigTiff ? 8 : 2;
  const inlineSize = bigTiff ? 8 : 4;

  const ifds: TiffIfd[] = [];
  const visited = new Set<number>();
  let offset = readOffset(bigTiff ? 8 : 4);
  if (offset === 0)
    throw new TiffInputError("corrupt_ifd", "The TIFF header points to no image directory (offset 0).");
  while (offset !== 0) {
    const page = ifds.length;
    if (visited.has(offset)) {
      throw new TiffInputError(
        "ifd_loop",
        `The image directory chain loops back to byte ${offset} after ${page} pages.`,
        { offset, page },
      );
    }
    if (page >= maxPages) {
      throw new TiffInputError(
        "too_large",
        `The file has more than ${maxPages} pages (the configured limit).`,
        { maxPages },
      );
    }
    visited.add(offset);
    if (offset < headerSize) {
      throw new TiffInputError(
        "corrupt_ifd",
        `Image directory ${page} points into the header (byte ${offset}).`,
        { offset, page },
      );
    }
    if (offset + countSize > n) {
      throw new TiffInputError(
        "truncated",
        `Image directory ${page} lies at byte ${offset}, beyond the end of the ${n}-byte file.`,
        { offset, page, bytes: n },
      );
    }
    const count = bigTiff ? readOffset(offset) : view.getUint16(offset, littleEndian);
    if (count === 0 || count > MAX_ENTRIES) {
      throw new TiffInputError(
        "corrupt_ifd",
        `Image directory ${page} at byte ${offset} declares ${count} entries.`,
        { offset, page, count },
      );
    }
    const tableEnd = offset + countSize + count * entrySize + inlineSize;
    if (tableEnd > n) {
      throw new TiffInputError(
        "truncated",
        `Image directory ${page} (${count} entries at byte ${offset}) runs past the end of the ${n}-byte file.`,
        { offset, page, bytes: n },
      );
    }
    const entries = new Map<number, TiffEntry>();
    for (let i = 0; i < count; i++) {
      const pos = offset + countSize + i * entrySize;
      const tag = view.getUint16(pos, littleEndian);
      const type = view.getUint16(pos + 2, littleEndian);
      const valueCount = bigTiff ? readOffset(pos + 4) : view.getUint32(pos + 4, littleEndian);
      const size = FIELD_TYPE_SIZES[type];
      if (size === undefined) {
        throw new TiffInputError(
          "corrupt_ifd",
          `Image directory ${page}, tag ${tag}: unknown field type ${type}.`,
          { page, tag, type },
        );
      }
      const byteLength = size * valueCount;
      const valuePos = pos + (bigTiff ? 12 : 8);
      const valueOffset = byteLength <= inlineSize ? valuePos : readOffset(valuePos);
      if (valueOffset + byteLength > n) {
        throw new TiffInputError(
          "corrupt_ifd",
          `Image directory ${page}, tag ${tag}: ${valueCount} values at byte ${valueOffset} would run past the end of the ${n}-byte file.`,
          { page, tag, count: valueCount, offset: valueOffset, bytes: n },
        );
      }
      entries.set(tag, { tag, type, count: valueCount, valueOffset });
    }
    ifds.push({ offset, entries });
    offset = readOffset(offset + countSize + count * entrySize);
  }
  return { littleEndian, bigTiff, ifds };
}

/**
 * Read an IFD entry's values as plain numbers (integers, rationals as num/den, floats).
 *
 * @param bytes - the whole file
 * @param entry - the entry, already validated by {@link scanTiffStructure}
 * @param littleEndian - the file's byte order
 * @param maxCount - read at most this many values @default all
 * @returns one number per value read (a RATIONAL gives numerator/denominator)
 * @throws {TiffInputError} `corrupt_ifd` for a non-numeric type
 */
export function readEntryNumbers(
  bytes: Uint8Array,
  entry: TiffEntry,
  littleEndian: boolean,
  maxCount = Infinity,
): Float64Array {
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const count = Math.min(entry.count, maxCount);
  const out = new Float64Array(count);
  const p = entry.valueOffset;
  const le = littleEndian;
  switch (entry.type) {
    case 1:
    case 7:
      for (let i = 0; i < count; i++) out[i] = bytes[p + i];
      break;
    case 6:
      for (let i = 0; i < count; i++) out[i] = view.getInt8(p + i);
      break;
    case 3:
      for (let i = 0; i < count; i++) out[i] = view.getUint16(p + 2 * i, le);
      break;
    case 8:
      for (let i = 0; i < count; i++) out[i] = view.getInt16(p + 2 * i, le);
      break;
    case 4:
    case 13:
      for (let i = 0; i < count; i++) out[i] = view.getUint32(p + 4 * i, le);
      break;
    case 9:
      for (let i = 0; i < count; i++) out[i] = view.getInt32(p + 4 * i, le);
      break;
    case 11:
      for (let i = 0; i < count; i++) out[i] = view.getFloat32(p + 4 * i, le);
      break;
    case 12:
      for (let i = 0; i < count; i++) out[i] = view.getFloat64(p + 8 * i, le);
      break;
    case 5:
      for (let i = 0; i < count; i++)
        out[i] = view.getUint32(p + 8 * i, le) / view.getUint32(p + 8 * i + 4, le);
      break;
    case 10:
      for (let i = 0; i < count; i++)
        out[i] = view.getInt32(p + 8 * i, le) / view.getInt32(p + 8 * i + 4, le);
      break;
    case 16:
    case 18:
      for (let i = 0; i < count; i++) out[i] = Number(view.getBigUint64(p + 8 * i, le));
      break;
    case 17:
      for (let i = 0; i < count; i++) out[i] = Number(view.getBigInt64(p + 8 * i, le));
      break;
    default:
      throw new TiffInputError("corrupt_ifd", `Tag ${entry.tag} has non-numeric field type ${entry.type}.`, {
        tag: entry.tag,
        type: entry.type,
      });
  }
  return out;
}
