/**
 * Write a z-stack (one channel, one time point) as a single-file OME-TIFF.
 */
import type { StackData, StackDtype } from "./stack";

/** The volume to write: row-major (z, y, x) samples with their voxel size. */
export interface OmeTiffVolume {
  data: StackData;
  /** [nz, ny, nx] */
  shape: [number, number, number];
  /** Voxel size, µm (x, y lateral; z the plane spacing). */
  voxelSizeUm: { x: number; y: number; z: number };
}

/** Options of {@link writeOmeTiff}. */
export interface WriteOmeTiffOptions {
  /** `Image@Name`. @default "image" */
  imageName?: string;
  /** `Image/Description` (free text); omitted when not given. */
  description?: string;
  /** `Channel@Name`; omitted when not given. */
  channelName?: string;
  /** `Channel@EmissionWavelength`, nm; omitted when not given. */
  emissionWavelengthNm?: number;
  /** `Image/AcquisitionDate` (ISO 8601 date-time); omitted when not given. */
  acquisitionDate?: string;
  /**
   * `OME@UUID` (`urn:uuid:…`) and the matching `TiffData/UUID` with `fileName`; the caller supplies
   * it so that the function stays deterministic. Omitted when not given (allowed for a single file).
   */
  uuid?: string;
  /** `TiffData/UUID@FileName`, used only with `uuid`. @default "image.ome.tif" */
  fileName?: string;
  /** `OME@Creator`. @default "Beadbench" */
  creator?: string;
}

/** OME `PixelType` per dtype. Source: OME data model schema 2016-06, PixelType enumeration (from memory). */
const OME_PIXEL_TYPE: Record<StackDtype, string> = {
  uint8: "uint8",
  uint16: "uint16",
  uint32: "uint32",
  float32: "float",
};

const OME_NS = "http://www.openmicroscopy.org/Schemas/OME/2016-06";

/** Largest file we write as classic TIFF (32-bit offsets), with room for the directories. */
const MAX_CLASSIC_BYTES = 0xffffffff - (1 << 20);

function xmlEscape(s: string): string {
  return (
    s
      .replace(/&/g, "&amp;")
      .replace(/</g, "&lt;")
      .replace(/>/g, "&gt;")
      .replace(/"/g, "&quot;")
      // XML 1.0 forbids C0 control characters other than tab, line feed and carriage return.
      // eslint-disable-next-line no-control-regex -- matching control characters is the point
      .replace(/[\u0000-\u0008\u000b\u000c\u000e-\u001f]/g, "")
  );
}

/** Shortest decimal text that reads back as the same double. */
function num(x: number): string {
  return String(x);
}

/**
 * Build the OME-XML block for {@link writeOmeTiff} (exported for tests and for callers that want
 * the metadata alone).
 *
 * @param volume - shape and voxel size (the samples are not read)
 * @param dtype - sample type of the planes
 * @param options - see {@link WriteOmeTiffOptions}
 * @returns the OME-XML text
 */
export function buildOmeXml(
  volume: Pick<OmeTiffVolume, "shape" | "voxelSizeUm">,
  dtype: StackDtype,
  options: WriteOmeTiffOptions = {},
): string {
  const [nz, ny, nx] = volume.shape;
  const v = volume.voxelSizeUm;
  const uuid = options.uuid;
  const channelAttrs = [
    `ID="Channel:0:0"`,
    `SamplesPerPixel="1"`,
    options.channelName !== undefined ? `Name="${xmlEscape(options.channelName)}"` : "",
    options.emissionWavelengthNm !== undefined
      ? `EmissionWavelength="${num(options.emissionWavelengthNm)}" EmissionWavelengthUnit="nm"`
      : "",
  ]
    .filter(Boolean)
    .join(" ");
  const tiffData = uuid
    ? `<TiffData IFD="0" PlaneCount="${nz}"><UUID FileName="${xmlEscape(options.fileName ?? "image.ome.tif")}">${xmlEscape(uuid)}</UUID></TiffData>`
    : `<TiffData IFD="0" PlaneCount="${nz}"/>`;
  // Source: OME data model schema 2016-06 (QC-PRACTICE.md §5.1): Image/Pixels with Size*, DimensionOrder,
  // PhysicalSize* + Unit; Pixels children in the order Channel, TiffData, Plane; AcquisitionDate and
  // Description come before Pixels in Image (element order from memory).
  return [
    `<?xml version="1.0" encoding="UTF-8"?>`,
    `<OME xmlns="${OME_NS}" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance"` +
      ` xsi:schemaLocation="${OME_NS} ${OME_NS}/ome.xsd"` +
      ` Creator="${xmlEscape(options.creator ?? "Beadbench")}"` +
      (uuid ? ` UUID="${xmlEscape(uuid)}"` : "") +
      `>`,
    `<Image ID="Image:0" Name="${xmlEscape(options.imageName ?? "image")}">`,
    options.acquisitionDate !== undefined
      ? `<AcquisitionDate>${xmlEscape(options.acquisitionDate)}</AcquisitionDate>`
      : "",
    options.description !== undefined ? `<Description>${xmlEscape(options.description)}</Description>` : "",
    `<Pixels ID="Pixels:0" DimensionOrder="XYZCT" Type="${OME_PIXEL_TYPE[dtype]}"` +
      ` SizeX="${nx}" SizeY="${ny}" SizeZ="${nz}" SizeC="1" SizeT="1"` +
      ` PhysicalSizeX="${num(v.x)}" PhysicalSizeXUnit="µm"` +
      ` PhysicalSizeY="${num(v.y)}" PhysicalSizeYUnit="µm"` +
      ` PhysicalSizeZ="${num(v.z)}" PhysicalSizeZUnit="µm"` +
      ` BigEndian="false" Interleaved="false" SignificantBits="${bitsOf(dtype)}">`,
    `<Channel ${channelAttrs}><LightPath/></Channel>`,
    tiffData,
    ...Array.from({ length: nz }, (_, z) => `<Plane TheZ="${z}" TheC="0" TheT="0"/>`),
    `</Pixels>`,
    `</Image>`,
    `</OME>`,
  ]
    .filter(Boolean)
    .join("\n");
}

function bitsOf(dtype: StackDtype): number {
  return dtype === "uint8" ? 8 : dtype === "uint16" ? 16 : 32;
}

function dtypeOf(data: StackData): StackDtype {
  if (data instanceof Uint8Array) return "uint8";
  if (data instanceof Uint16Array) return "uint16";
  if (data instanceof Uint32Array) return "uint32";
  if (data instanceof Float32Array) return "float32";
  throw new TypeError("volume.data must be a Uint8Array, Uint16Array, Uint32Array or Float32Array.");
}

interface Entry {
  tag: number;
  /** TIFF field type: 2 ASCII, 3 SHORT, 4 LONG. */
  type: 2 | 3 | 4;
  /** Numbers, or the bytes of an ASCII value (NUL included). */
  values: number[] | Uint8Array;
}

function entryBytes(e: Entry): number {
  if (e.values instanceof Uint8Array) return e.values.length;
  const size = e.type === 3 ? 2 : 4;
  return size * e.values.length;
}

/**
 * Write a single-channel z-stack as an uncompressed, little-endian, classic OME-TIFF: one page per
 * z-plane, the complete OME-XML in the first page's ImageDescription.
 *
 * @param volume - samples row-major (z, y, x), shape [nz, ny, nx] and voxel size in µm
 * @param options - see {@link WriteOmeTiffOptions}
 * @returns the file bytes
 * @throws {TypeError} when `volume.data` is not one of the stack sample arrays
 * @throws {RangeError} when `volume.shape` is not three positive integers, `volume.data` has the
 *   wrong length, a voxel size is not a positive finite number, or the file would exceed 4 GB
 *
 * Notes: one strip per page; planes are in z order and mapped by a single `TiffData` (IFD 0,
 * PlaneCount = SizeZ) with `DimensionOrder="XYZCT"`. Pages 2… carry no ImageDescription. Samples are
 * written little-endian (assumes a little-endian host, like the reader).
 * References: TIFF 6.0 specification (sections 2 and 8); OME-TIFF and OME data model schema 2016-06
 * (QC-PRACTICE.md §5.1).
 *
 * @example
 * const bytes = writeOmeTiff({ data: new Float32Array(2 * 4 * 4), shape: [2, 4, 4], voxelSizeUm: { x: 0.05, y: 0.05, z: 0.1 } });
 */
export function writeOmeTiff(volume: OmeTiffVolume, options: WriteOmeTiffOptions = {}): Uint8Array {
  const { data, shape, voxelSizeUm } = volume;
  const dtype = dtypeOf(data);
  if (!Array.isArray(shape) || shape.length !== 3 || shape.some((n) => !Number.isInteger(n) || n < 1))
    throw new RangeError(`volume.shape must be three positive integers [nz, ny, nx]; got ${String(shape)}.`);
  const [nz, ny, nx] = shape;
  if (data.length !== nz * ny * nx)
    throw new RangeError(
      `volume.data has ${data.length} samples; shape ${shape.join("×")} needs ${nz * ny * nx}.`,
    );
  for (const axis of ["x", "y", "z"] as const) {
    const s = voxelSizeUm?.[axis];
    if (!(typeof s === "number" && Number.isFinite(s) && s > 0))
      throw new RangeError(`volume.voxelSizeUm.${axis} must be a positive number of µm; got ${String(s)}.`);
  }

  const bps = data.BYTES_PER_ELEMENT;
  const planeBytes = nx * ny * bps;
  const xml = new TextEncoder().encode(buildOmeXml(volume, dtype, options));
  const description = new Uint8Array(xml.length + 1); // ASCII fields end with NUL
  description.set(xml);

  const pageEntries = (z: number, stripOffset: number): Entry[] => {
    const entries: Entry[] = [
      { tag: 254, type: 4, values: [0] }, // NewSubfileType
      { tag: 256, type: 4, values: [nx] }, // ImageWidth
      { tag: 257, type: 4, values: [ny] }, // ImageLength
      { tag: 258, type: 3, values: [bps * 8] }, // BitsPerSample
      { tag: 259, type: 3, values: [1] }, // Compression: none
      { tag: 262, type: 3, values: [1] }, // PhotometricInterpretation: BlackIsZero
    ];
    if (z === 0) entries.push({ tag: 270, type: 2, values: description }); // ImageDescription
    entries.push(
      { tag: 273, type: 4, values: [stripOffset] }, // StripOffsets
      { tag: 277, type: 3, values: [1] }, // SamplesPerPixel
      { tag: 278, type: 4, values: [ny] }, // RowsPerStrip
      { tag: 279, type: 4, values: [planeBytes] }, // StripByteCounts
      { tag: 284, type: 3, values: [1] }, // PlanarConfiguration: chunky
      { tag: 339, type: 3, values: [dtype === "float32" ? 3 : 1] }, // SampleFormat: IEEE float / uint
    );
    return entries;
  };

  // Layout: header, then per page [pixel strip][out-of-line values][IFD], each word-aligned.
  const align = (n: number) => n + (n % 2);
  let size = 8;
  const layout: Array<{ strip: number; values: number[]; ifd: number; entries: Entry[] }> = [];
  for (let z = 0; z < nz; z++) {
    const strip = size;
    size = align(size + planeBytes);
    const entries = pageEntries(z, strip);
    const values = entries.map((e) => {
      if (entryBytes(e) <= 4) return -1;
      const at = size;
      size = align(size + entryBytes(e));
      return at;
    });
    const ifd = size;
    size = align(size + 2 + entries.length * 12 + 4);
    layout.push({ strip, values, ifd, entries });
    if (size > MAX_CLASSIC_BYTES)
      throw new RangeError(`volume is too large for a classic TIFF (over 4 GB); shape ${shape.join("×")}.`);
  }

  const out = new Uint8Array(size);
  const view = new DataView(out.buffer);
  out[0] = out[1] = 0x49; // "II": little-endian
  view.setUint16(2, 42, true);
  view.setUint32(4, layout[0].ifd, true);
  const samples = new Uint8Array(data.buffer, data.byteOffset, data.byteLength);
  const writeValues = (e: Entry, at: number) => {
    if (e.values instanceof Uint8Array) {
      out.set(e.values, at);
      return;
    }
    e.values.forEach((x, i) => {
      if (e.type === 3) view.setUint16(at + 2 * i, x, true);
      else view.setUint32(at + 4 * i, x, true);
    });
  };
  layout.forEach((page, z) => {
    out.set(samples.subarray(z * planeBytes, (z + 1) * planeBytes), page.strip);
    const { entries, values, ifd } = page;
    view.setUint16(ifd, entries.length, true);
    entries.forEach((e, i) => {
      const p = ifd + 2 + i * 12;
      view.setUint16(p, e.tag, true);
      view.setUint16(p + 2, e.type, true);
      view.setUint32(p + 4, e.values.length, true);
      if (values[i] >= 0) {
        writeValues(e, values[i]);
        view.setUint32(p + 8, values[i], true);
      } else writeValues(e, p + 8);
    });
    const next = z + 1 < layout.length ? layout[z + 1].ifd : 0;
    view.setUint32(ifd + 2 + entries.length * 12, next, true);
  });
  return out;
}
