/**
 * Header-only analysis shared by `inspectTiff` and `readTiffStack`: validates the structure,
 * reads page tags through geotiff, works out channels/slices/frames from ImageJ or OME-XML
 * metadata, selects the pages of one channel and frame, and checks limits — all before any
 * pixel buffer is allocated.
 */
import { GeoTIFF } from "geotiff";
import type { StackDtype } from "./stack";
import { parseImageJDescription } from "./parse-imagej-description";
import { parseOmeXml, type OmeMetadata } from "./parse-ome-xml";
import { lengthToUm } from "./length-to-um";
import {
  readEntryNumbers,
  scanTiffStructure,
  type TiffEntry,
  type TiffStructure,
} from "./scan-tiff-structure";
import { TiffInputError } from "./tiff-input-error";
import type { MetadataSource, Sourced, TiffMetadata, TiffWarning } from "./tiff-metadata";

/** Options shared by `inspectTiff` and `readTiffStack`. */
export interface TiffReadOptions {
  /** Channel to read (0-based). @default 0 */
  channel?: number;
  /** Time point to read (0-based). @default 0 */
  frame?: number;
  /** Fewer slices than this is refused with `not_a_stack`. @default 2 */
  minSlices?: number;
  /** Largest stack (voxels of the selected channel and frame) accepted. @default 536870912 (2^29) */
  maxVoxels?: number;
  /** Largest decoded stack accepted, bytes. @default 2147483648 (2 GiB) */
  maxBytes?: number;
  /** Longest IFD chain accepted. @default 65536 */
  maxPages?: number;
}

/** How one page's pixels are stored (internal to lib/tiff). */
export interface PageLayout {
  ifdIndex: number;
  width: number;
  height: number;
  bytesPerSample: number;
  compression: number;
  predictor: number;
  /** Rows per strip (strips only). */
  rowsPerStrip: number;
  /** 0 for stripped pages. */
  tileWidth: number;
  tileHeight: number;
  offsets: Float64Array;
  byteCounts: Float64Array | null;
}

/** Result of {@link planTiffStack}. */
export interface TiffStackPlan {
  metadata: TiffMetadata;
  structure: TiffStructure;
  /** Page layouts of the selected stack, in z order. */
  pages: PageLayout[];
}

const COMPRESSION_NAMES: Record<number, string> = {
  1: "none",
  5: "lzw",
  8: "deflate",
  32946: "deflate",
  32773: "packbits",
};
const MAX_DESCRIPTION_CHARS = 16 * 1024 * 1024;
const TAGS = {
  ImageWidth: 256,
  ImageLength: 257,
  BitsPerSample: 258,
  Compression: 259,
  ImageDescription: 270,
  SamplesPerPixel: 277,
  RowsPerStrip: 278,
  XResolution: 282,
  YResolution: 283,
  PlanarConfiguration: 284,
  ResolutionUnit: 296,
  Predictor: 317,
  TileWidth: 322,
  TileLength: 323,
  SampleFormat: 339,
} as const;
const MAX_TILE_BYTES = 256 * 1024 * 1024;

/**
 * Analyse a TIFF's headers and metadata and plan the decoding of one channel/frame as a z-stack.
 *
 * @param bytes - the whole file
 * @param options - see {@link TiffReadOptions}
 * @returns metadata, validated structure and per-slice page layouts
 * @throws {TiffInputError} any code except `corrupt_data`
 *
 * Notes: limits are checked against the declared size before anything is allocated. Strip and tile
 * ranges of the selected pages are checked to lie inside the file.
 * References: TIFF 6.0 specification, sections 2, 3, 8 (baseline fields), 15 (tiles);
 * QC-PRACTICE.md §5.1–5.2.
 *
 * @example
 * const { metadata, pages } = await planTiffStack(bytes, { channel: 1 });
 */
export async function planTiffStack(
  bytes: Uint8Array,
  options: TiffReadOptions = {},
): Promise<TiffStackPlan> {
  const {
    channel = 0,
    frame = 0,
    minSlices = 2,
    maxVoxels = 536870912,
    maxBytes = 2147483648,
    maxPages = 65536,
  } = options;
  for (const [name, v] of Object.entries({ channel, frame }) as Array<[string, number]>) {
    if (!Number.isInteger(v) || v < 0)
      throw new TiffInputError("bad_option", `Option ${name} must be a non-negative integer (got ${v}).`);
  }
  const structure = scanTiffStructure(bytes, { maxPages });
  const { littleEndian, ifds } = structure;
  const warnings: TiffWarning[] = [];

  let tiff: GeoTIFF;
  try {
    tiff = await GeoTIFF.fromSource(byteSource(bytes) as unknown as Parameters<typeof GeoTIFF.fromSource>[0]);
  } catch (e) {
    throw mapForeign(e, "the TIFF header");
  }

  // Per-page tags.
  const tagCache: Array<PageTags | undefined> = [];
  const pageTags = async (i: number): Promise<PageTags> => {
    const cached = tagCache[i];
    if (cached) return cached;
    const t = await readPageTags(tiff, i, structure);
    tagCache[i] = t;
    return t;
  };
  const first = await pageTags(0);

  const fullRes: number[] = [];
  for (let i = 0; i < ifds.length; i++) {
    const nst = ifds[i].entries.has(254)
      ? readEntryNumbers(bytes, ifds[i].entries.get(254)!, littleEndian)[0]
      : 0;
    if ((nst & 1) === 0) fullRes.push(i);
  }
  if (fullRes.length < ifds.length) {
    warnings.push({
      code: "reduced_resolution_pages",
      message: `${ifds.length - fullRes.length} reduced-resolution page(s) (thumbnails) were ignored.`,
    });
  }
  if (fullRes.length === 0)
    throw new TiffInputError("corrupt_ifd", "The file has only reduced-resolution pages.");
  const firstImage = fullRes[0] === 0 ? first : await pageTags(fullRes[0]);
  const dtype = checkSampleLayout(firstImage, fullRes[0]);

  // Metadata conventions.
  const description = first.description;
  const isOme = description !== null && /<OME[\s>]/.test(description.slice(0, 4096));
  const imagej = description !== null && !isOme ? parseImageJDescription(description) : null;
  let ome: OmeMetadata | null = null;
  if (isOme) {
    ome = parseOmeXml(description!, ifds.length);
    for (const w of ome.warnings) warnings.push({ code: "ignored_metadata", message: w });
  }

  let channels: Sourced<number>;
  let slices: Sourced<number>;
  let frames: Sourced<number>;
  let dimensionOrder: Sourced<string>;
  let ifdOf: (z: number) => number;
  if (ome) {
    if (ome.sizeX !== firstImage.width || ome.sizeY !== firstImage.height) {
      throw new TiffInputError(
        "bad_metadata",
        `OME-XML declares ${ome.sizeX}×${ome.sizeY} pixels but the first page is ${firstImage.width}×${firstImage.height}.`,
      );
    }
    channels = { value: ome.sizeC, source: "ome-xml" };
    slices = { value: ome.sizeZ, source: "ome-xml" };
    frames = { value: ome.sizeT, source: "ome-xml" };
    dimensionOrder = { value: ome.dimensionOrder, source: "ome-xml" };
    const o = ome;
    ifdOf = (z) => o.planeToIfd[z + o.sizeZ * (channel + o.sizeC * frame)];
  } else if (imagej) {
    const c = imagej.channels ?? 1;
    const f = imagej.frames ?? 1;
    const images = imagej.images ?? fullRes.length;
    const s = imagej.slices ?? Math.floor(images / (c * f));
    // Source: ImageJ description keys (QC-PRACTICE.md §5.2): hyperstack order is channels fastest,
    // then slices, then frames (from memory) — so the counts must multiply to `images`.
    if (c * s * f !== images) {
      throw new TiffInputError(
        "bad_metadata",
        `The ImageJ description says channels=${c}, slices=${s}, frames=${f} but images=${images}.`,
        { channels: c, slices: s, frames: f, images },
      );
    }
    channels = { value: c, source: imagej.channels !== null ? "imagej" : "default" };
    slices = { value: s, source: imagej.slices !== null ? "imagej" : "default" };
    frames = { value: f, source: imagej.frames !== null ? "imagej" : "default" };
    dimensionOrder = { value: "XYCZT", source: "imagej" };
    ifdOf = (z) => {
      const k = channel + c * (z + s * frame);
      return k < fullRes.length ? fullRes[k] : -1;
    };
  } else {
    channels = { value: 1, source: "default" };
    slices = { value: fullRes.length, source: "default" };
    frames = { value: 1, source: "default" };
    dimensionOrder = { value: "XYZCT", source: "default" };
    ifdOf = (z) => fullRes[z];
  }
  if (channel >= channels.value) {
    throw new TiffInputError(
      "bad_option",
      `Channel ${channel} was requested but the file has ${channels.value} channel(s).`,
      { channel, channels: channels.value },
    );
  }
  if (frame >= frames.value) {
    throw new TiffInputError(
      "bad_option",
      `Frame ${frame} was requested but the file has ${frames.value} frame(s).`,
      { frame, frames: frames.value },
    );
  }

  const nz = slices.value;
  const { width, height } = firstImage;
  const bytesPerSample = firstImage.bytesPerSample;
  const voxels = width * height * nz;
  const stackBytes = voxels * bytesPerSample;
  // Source: STYLE.md C5 / DESIGN.md §4.1 — limits before allocation.
  if (voxels > maxVoxels || stackBytes > maxBytes) {
    throw new TiffInputError(
      "too_large",
      `The stack is ${width}×${height}×${nz} = ${voxels} voxels (${stackBytes} bytes), above the limit of ${maxVoxels} voxels / ${maxBytes} bytes.`,
      { width, height, slices: nz, voxels, bytes: stackBytes, maxVoxels, maxBytes },
    );
  }
  if (nz < minSlices) {
    throw new TiffInputError(
      "not_a_stack",
      `The file holds ${nz} slice(s) per channel; a z-stack needs at least ${minSlices}.`,
      { slices: nz, minSlices },
    );
  }
  if (imagej && imagej.images !== null && imagej.images < fullRes.length) {
    warnings.push({
      code: "extra_pages",
      message: `The file has ${fullRes.length} pages but the ImageJ description lists ${imagej.images} images; the extra pages were ignored.`,
    });
  }

  // Every full-resolution page must match the first (size, sample type).
  for (const i of fullRes) {
    const t = await pageTags(i);
    if (t.width !== width || t.height !== height) {
      throw new TiffInputError(
        "inconsistent_pages",
        `Page ${i} is ${t.width}×${t.height} pixels but page ${fullRes[0]} is ${width}×${height}.`,
        { page: i },
      );
    }
    const d = checkSampleLayout(t, i);
    if (d !== dtype)
      throw new TiffInputError(
        "inconsistent_pages",
        `Page ${i} holds ${d} samples but page ${fullRes[0]} holds ${dtype}.`,
        { page: i },
      );
  }

  const pages: PageLayout[] = [];
  for (let z = 0; z < nz; z++) {
    const ifdIndex = ifdOf(z);
    if (ifdIndex === undefined || ifdIndex < 0 || ifdIndex >= ifds.length) {
      throw new TiffInputError(
        "bad_metadata",
        `Slice ${z} of channel ${channel}, frame ${frame} is not stored in this file (the metadata declares more planes than the file has pages: ${ifds.length}).`,
        { slice: z, pages: ifds.length },
      );
    }
    pages.push(pageLayout(await pageTags(ifdIndex), ifdIndex, bytes, littleEndian));
  }

  // Voxel size.
  const voxelSizeUm: TiffMetadata["voxelSizeUm"] = { x: null, y: null, z: null };
  if (ome) {
    const p = ome.physicalSizeUm;
    if (p.x !== null) voxelSizeUm.x = { value: p.x, source: "ome-xml" };
    if (p.y !== null) voxelSizeUm.y = { value: p.y, source: "ome-xml" };
    if (p.z !== null) voxelSizeUm.z = { value: p.z, source: "ome-xml" };
  }
  if (voxelSizeUm.x === null || voxelSizeUm.y === null) {
    const lateral = lateralFromResolution(first, imagej?.unit ?? null, warnings);
    if (lateral) {
      voxelSizeUm.x ??= { value: lateral.x, source: "resolution-tag" };
      voxelSizeUm.y ??= { value: lateral.y, source: "resolution-tag" };
    }
  }
  if (voxelSizeUm.z === null && imagej && imagej.spacing !== null) {
    // Source: ImageJ description keys (QC-PRACTICE.md §5.2): `spacing` is the z-step in `unit`.
    const um = imagej.unit !== null ? lengthToUm(imagej.spacing, imagej.unit) : null;
    if (um !== null && um > 0) voxelSizeUm.z = { value: um, source: "imagej" };
    else
      warnings.push({
        code: "ignored_metadata",
        message: `The ImageJ spacing=${imagej.spacing} has no usable length unit (unit=${imagej.unit ?? "none"}).`,
      });
  }
  if (voxelSizeUm.x === null || voxelSizeUm.y === null) {
    warnings.push({ code: "no_pixel_size", message: "No lateral pixel size in the file: enter it." });
  }
  if (voxelSizeUm.z === null)
    warnings.push({ code: "no_z_spacing", message: "No z-spacing in the file: enter it." });

  const ch = ome?.channels[channel];
  const src = (v: number | string | null | undefined, s: MetadataSource = "ome-xml") =>
    v === null || v === undefined ? null : { value: v, source: s };
  const metadata: TiffMetadata = {
    format: ome ? "ome-tiff" : imagej ? "imagej" : "plain",
    byteOrder: littleEndian ? "little-endian" : "big-endian",
    bigTiff: structure.bigTiff,
    pageCount: ifds.length,
    width,
    height,
    dtype,
    compression: COMPRESSION_NAMES[pages[0].compression] ?? String(pages[0].compression),
    predictor: pages[0].predictor,
    tiled: pages[0].tileWidth > 0,
    channels,
    slices,
    frames,
    dimensionOrder,
    channel,
    frame,
    stackBytes,
    voxelSizeUm,
    numericalAperture: src(ome?.objective?.lensNa) as Sourced<number> | null,
    immersion: src(ome?.objective?.immersion) as Sourced<string> | null,
    magnification: src(ome?.objective?.nominalMagnification) as Sourced<number> | null,
    immersionRefractiveIndex: src(ome?.immersionRefractiveIndex) as Sourced<number> | null,
    emissionWavelengthNm: src(ch?.emissionWavelengthNm) as Sourced<number> | null,
    excitationWavelengthNm: src(ch?.excitationWavelengthNm) as Sourced<number> | null,
    pinholeSizeUm: src(ch?.pinholeSizeUm) as Sourced<number> | null,
    acquisitionMode: src(ch?.acquisitionMode) as Sourced<string> | null,
    temperatureC: src(ome?.temperatureC) as Sourced<number> | null,
    acquisitionDate: src(ome?.acquisitionDate) as Sourced<string> | null,
    warnings,
  };
  return { metadata, structure, pages };
}

interface PageTags {
  index: number;
  width: number;
  height: number;
  bitsPerSample: number[];
  sampleFormat: number;
  samplesPerPixel: number;
  compression: number;
  predictor: number;
  planar: number;
  rowsPerStrip: number;
  tileWidth: number;
  tileHeight: number;
  bytesPerSample: number;
  offsetEntry: TiffEntry | null;
  byteCountEntry: TiffEntry | null;
  description: string | null;
  xResolution: number | null;
  yResolution: number | null;
  resolutionUnit: number;
}

async function readPageTags(tiff: GeoTIFF, i: number, structure: TiffStructure): Promise<PageTags> {
  const entries = structure.ifds[i].entries;
  try {
    const image = await tiff.getImage(i);
    const fd = image.fileDirectory;
    // Source: TIFF 6.0 specification, section 8 (baseline tag numbers).
    const get = async (name: keyof typeof TAGS): Promise<unknown> =>
      fd.hasTag(TAGS[name]) ? fd.loadValue(TAGS[name]) : undefined;
    const scalar = async (name: keyof typeof TAGS, fallback: number): Promise<number> => {
      const v = await get(name);
      const n =
        typeof v === "number"
          ? v
          : isArrayLike(v)
            ? Number(v[0])
            : typeof v === "bigint"
              ? Number(v)
              : fallback;
      return Number.isFinite(n) ? n : fallback;
    };
    const width = await scalar("ImageWidth", 0);
    const height = await scalar("ImageLength", 0);
    if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1) {
      throw new TiffInputError(
        "corrupt_ifd",
        `Page ${i} has no valid ImageWidth/ImageLength (${width}×${height}).`,
        { page: i },
      );
    }
    const bpsRaw = await get("BitsPerSample");
    const bitsPerSample =
      bpsRaw === undefined
        ? [1]
        : isArrayLike(bpsRaw)
          ? Array.from(bpsRaw as ArrayLike<number>, Number)
          : [Number(bpsRaw)];
    const sampleFormat = await scalar("SampleFormat", 1);
    const samplesPerPixel = await scalar("SamplesPerPixel", 1);
    const compression = await scalar("Compression", 1);
    const predictor = await scalar("Predictor", 1);
    const planar = await scalar("PlanarConfiguration", 1);
    const rowsPerStrip = await scalar("RowsPerStrip", 4294967295);
    const tileWidth = entries.has(322) ? await scalar("TileWidth", 0) : 0;
    const tileHeight = entries.has(323) ? await scalar("TileLength", 0) : 0;
    // Offsets and byte counts are read from our own validated entry table: geotiff reads
    // out-of-line arrays it defers as little-endian regardless of the file's byte order.
    const offEntry = entries.get(tileWidth > 0 ? 324 : 273);
    const cntEntry = entries.get(tileWidth > 0 ? 325 : 279);
    let description: string | null = null;
    let xResolution: number | null = null;
    let yResolution: number | null = null;
    let resolutionUnit = 2;
    if (i === 0) {
      const descEntry = entries.get(270);
      if (descEntry && descEntry.count > MAX_DESCRIPTION_CHARS) {
        throw new TiffInputError(
          "bad_metadata",
          `The ImageDescription is ${descEntry.count} bytes long (limit ${MAX_DESCRIPTION_CHARS}).`,
        );
      }
      const d = await get("ImageDescription");
      if (typeof d === "string") description = d.replace(/\0+$/g, "").replace(/^\uFEFF/, "");
      xResolution = rational(await get("XResolution"));
      yResolution = rational(await get("YResolution"));
      resolutionUnit = await scalar("ResolutionUnit", 2);
    }
    return {
      index: i,
      width,
      height,
      bitsPerSample,
      sampleFormat,
      samplesPerPixel,
      compression,
      predictor,
      planar,
      rowsPerStrip,
      tileWidth,
      tileHeight,
      bytesPerSample: Math.max(1, (bitsPerSample[0] ?? 8) >> 3),
      offsetEntry: offEntry ?? null,
      byteCountEntry: cntEntry ?? null,
      description,
      xResolution,
      yResolution,
      resolutionUnit,
    };
  } catch (e) {
    throw mapForeign(e, `page ${i}`);
  }
}

function checkSampleLayout(t: PageTags, page: number): StackDtype {
  if (t.samplesPerPixel !== 1) {
    throw new TiffInputError(
      "multi_sample",
      `Page ${page} has ${t.samplesPerPixel} samples per pixel (RGB or similar); a single-channel grey-level stack is needed.`,
      { page, samplesPerPixel: t.samplesPerPixel },
    );
  }
  const bits = t.bitsPerSample[0];
  // Source: TIFF 6.0 specification, section 19 "Data Sample Format": 1 = unsigned int, 3 = IEEE float.
  if (t.sampleFormat === 1 && (bits === 8 || bits === 16 || bits === 32)) return `uint${bits}` as StackDtype;
  if (t.sampleFormat === 3 && bits === 32) return "float32";
  const kind =
    t.sampleFormat === 1
      ? "unsigned integer"
      : t.sampleFormat === 2
        ? "signed integer"
        : t.sampleFormat === 3
          ? "floating-point"
          : `format-${t.sampleFormat}`;
  throw new TiffInputError(
    "unsupported_sample_format",
    `Page ${page} holds ${bits}-bit ${kind} samples; supported are 8/16/32-bit unsigned integers and 32-bit floats.`,
    { page, bitsPerSample: bits, sampleFormat: t.sampleFormat },
  );
}

function pageLayout(t: PageTags, ifdIndex: number, bytes: Uint8Array, littleEndian: boolean): PageLayout {
  const fileBytes = bytes.byteLength;
  if (!(t.compression in COMPRESSION_NAMES)) {
    throw new TiffInputError(
      "unsupported_compression",
      `Page ${ifdIndex} uses TIFF compression ${t.compression}; supported are none (1), LZW (5), Deflate (8, 32946) and PackBits (32773).`,
      { page: ifdIndex, compression: t.compression },
    );
  }
  if (t.predictor !== 1 && t.predictor !== 2 && t.predictor !== 3) {
    throw new TiffInputError("unsupported_compression", `Page ${ifdIndex} uses predictor ${t.predictor}.`, {
      page: ifdIndex,
      predictor: t.predictor,
    });
  }
  const { width, height, bytesPerSample } = t;
  let expectedChunks: number;
  let chunkBytes: number;
  if (t.tileWidth > 0 || t.tileHeight > 0) {
    if (!(t.tileWidth > 0 && t.tileHeight > 0))
      throw new TiffInputError(
        "corrupt_ifd",
        `Page ${ifdIndex} declares a tile size of ${t.tileWidth}×${t.tileHeight}.`,
        { page: ifdIndex },
      );
    chunkBytes = t.tileWidth * t.tileHeight * bytesPerSample;
    if (chunkBytes > MAX_TILE_BYTES) {
      throw new TiffInputError(
        "too_large",
        `Page ${ifdIndex} declares ${t.tileWidth}×${t.tileHeight} tiles (${chunkBytes} bytes each), above ${MAX_TILE_BYTES} bytes.`,
        { page: ifdIndex },
      );
    }
    expectedChunks = Math.ceil(width / t.tileWidth) * Math.ceil(height / t.tileHeight);
  } else {
    if (!(t.rowsPerStrip >= 1))
      throw new TiffInputError("corrupt_ifd", `Page ${ifdIndex} declares RowsPerStrip ${t.rowsPerStrip}.`, {
        page: ifdIndex,
      });
    expectedChunks = Math.ceil(height / Math.min(t.rowsPerStrip, height));
    chunkBytes = Math.min(t.rowsPerStrip, height) * width * bytesPerSample;
  }
  // Only the offsets this page needs are read (a corrupt count cannot make us read more).
  const offsets = t.offsetEntry ? readEntryNumbers(bytes, t.offsetEntry, littleEndian, expectedChunks) : null;
  if (!offsets || offsets.length < expectedChunks) {
    throw new TiffInputError(
      "corrupt_ifd",
      `Page ${ifdIndex} lists ${offsets?.length ?? 0} strip/tile offsets; ${expectedChunks} are needed.`,
      { page: ifdIndex },
    );
  }
  const counts = t.byteCountEntry
    ? readEntryNumbers(bytes, t.byteCountEntry, littleEndian, expectedChunks)
    : null;
  if (counts && counts.length < expectedChunks) {
    throw new TiffInputError(
      "corrupt_ifd",
      `Page ${ifdIndex} lists ${counts.length} strip/tile byte counts; ${expectedChunks} are needed.`,
      { page: ifdIndex },
    );
  }
  if (!counts && t.compression !== 1) {
    throw new TiffInputError(
      "corrupt_ifd",
      `Page ${ifdIndex} is compressed but has no StripByteCounts/TileByteCounts.`,
      { page: ifdIndex },
    );
  }
  for (let k = 0; k < expectedChunks; k++) {
    const count = counts ? counts[k] : chunkBytes;
    const end = offsets[k] + count;
    if (!Number.isFinite(end) || end > fileBytes || offsets[k] < 0 || count < 0) {
      throw new TiffInputError(
        "truncated",
        `Strip/tile ${k} of page ${ifdIndex} spans bytes ${offsets[k]}–${end}, beyond the end of the ${fileBytes}-byte file.`,
        { page: ifdIndex, chunk: k, end, bytes: fileBytes },
      );
    }
  }
  return {
    ifdIndex,
    width,
    height,
    bytesPerSample,
    compression: t.compression,
    predictor: t.predictor,
    rowsPerStrip: Math.min(t.rowsPerStrip, height),
    tileWidth: t.tileWidth,
    tileHeight: t.tileHeight,
    offsets,
    byteCounts: counts,
  };
}

/**
 * Pixel size from X/YResolution (pixels per unit). Source: TIFF 6.0 specification, section 8
 * (XResolution, YResolution, ResolutionUnit: 1 none, 2 inch, 3 cm); QC-PRACTICE.md §5.2
 * (pixel width = 1/XResolution; 72 dpi with unit inch = uncalibrated; unit "none" takes the
 * ImageJ description's unit).
 */
function lateralFromResolution(
  t: PageTags,
  imagejUnit: string | null,
  warnings: TiffWarning[],
): { x: number; y: number } | null {
  const xr = t.xResolution;
  const yr = t.yResolution ?? xr;
  if (xr === null || yr === null || !(xr > 0) || !(yr > 0) || !Number.isFinite(xr) || !Number.isFinite(yr))
    return null;
  let unitUm: number | null;
  if (t.resolutionUnit === 2) {
    if (Math.abs(xr - 72) < 1e-6 && Math.abs(yr - 72) < 1e-6) {
      warnings.push({
        code: "uncalibrated_resolution",
        message: "The resolution tags say 72 dpi, the usual 'uncalibrated' default; ignored.",
      });
      return null;
    }
    unitUm = 25400;
  } else if (t.resolutionUnit === 3) unitUm = 1e4;
  else unitUm = imagejUnit !== null ? lengthToUm(1, imagejUnit) : null;
  if (unitUm === null) return null;
  return { x: unitUm / xr, y: unitUm / yr };
}

function rational(v: unknown): number | null {
  if (typeof v === "number") return v;
  if (isArrayLike(v) && v.length >= 2) {
    const num = Number(v[0]);
    const den = Number(v[1]);
    return den !== 0 ? num / den : null;
  }
  return null;
}

function isArrayLike(v: unknown): v is ArrayLike<number> {
  return v !== null && typeof v === "object" && typeof (v as { length?: unknown }).length === "number";
}

/**
 * A geotiff data source over our bytes that copies only the ranges geotiff asks for (IFDs and
 * tag values), so a Uint8Array view into a larger buffer is never copied whole.
 */
function byteSource(bytes: Uint8Array) {
  return {
    fileSize: bytes.byteLength,
    fetch: async (slices: Array<{ offset: number; length: number }>): Promise<ArrayBuffer[]> =>
      slices.map(({ offset, length }) => {
        const start = Math.min(Math.max(0, offset), bytes.byteLength);
        const end = Math.min(bytes.byteLength, start + Math.max(0, length));
        const copy = new Uint8Array(end - start);
        copy.set(bytes.subarray(start, end));
        return copy.buffer;
      }),
    close: async (): Promise<void> => {},
  };
}

/** Map anything thrown by geotiff (or a bug of ours) to a TiffInputError. */
function mapForeign(e: unknown, where: string): TiffInputError {
  if (e instanceof TiffInputError) return e;
  const msg = e instanceof Error ? e.message : String(e);
  return new TiffInputError("corrupt_ifd", `Could not parse ${where}: ${msg.slice(0, 300)}`);
}
