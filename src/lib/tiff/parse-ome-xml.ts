/**
 * Parser for the OME-XML block an OME-TIFF carries in its first ImageDescription.
 */
import { XMLParser } from "fast-xml-parser";
import { lengthToUm } from "./length-to-um";
import { TiffInputError } from "./tiff-input-error";

/** Per-channel acquisition settings from `Pixels/Channel`; absent values are null. */
export interface OmeChannel {
  name: string | null;
  /** Emission wavelength, nm. */
  emissionWavelengthNm: number | null;
  /** Excitation wavelength, nm. */
  excitationWavelengthNm: number | null;
  /** Physical pinhole diameter, µm (not Airy units). */
  pinholeSizeUm: number | null;
  /** OME AcquisitionMode, e.g. `WideField`, `LaserScanningConfocalMicroscopy`. */
  acquisitionMode: string | null;
}

/** What {@link parseOmeXml} extracts from the first `Image`. */
export interface OmeMetadata {
  /** Number of `Image` elements (only the first is read). */
  imageCount: number;
  sizeX: number;
  sizeY: number;
  sizeZ: number;
  sizeC: number;
  sizeT: number;
  /** e.g. `XYZCT` (fastest-varying first after X and Y). */
  dimensionOrder: string;
  /** OME pixel type, e.g. `uint16`. */
  pixelType: string | null;
  /** Voxel size in µm (converted from the declared units); null where absent or invalid. */
  physicalSizeUm: { x: number | null; y: number | null; z: number | null };
  channels: OmeChannel[];
  /** Objective referenced by `ObjectiveSettings` (or the only one declared). */
  objective: { lensNa: number | null; immersion: string | null; nominalMagnification: number | null } | null;
  /** `ObjectiveSettings@RefractiveIndex`: the immersion medium's index. */
  immersionRefractiveIndex: number | null;
  /** `ImagingEnvironment@Temperature` in °C. */
  temperatureC: number | null;
  /** `Image/AcquisitionDate` as written (ISO 8601). */
  acquisitionDate: string | null;
  /** IFD index of plane (z, c, t) at `z + sizeZ * (c + sizeC * t)`; -1 where not in this file. */
  planeToIfd: number[];
  warnings: string[];
}

type XmlNode = Record<string, unknown>;

const ARRAY_TAGS = new Set(["Image", "Channel", "TiffData", "Plane", "Instrument", "Objective"]);

/** Largest number of planes we map (guards the mapping array against absurd declared sizes). */
const MAX_PLANES = 1 << 22;

/**
 * Parse OME-XML and map its planes to IFDs.
 *
 * @param text - the OME-XML text
 * @param ifdCount - number of IFDs in the file (for the default plane mapping and checks)
 * @returns sizes, physical sizes in µm, acquisition settings and the plane→IFD map
 * @throws {TiffInputError} `bad_metadata` for XML that does not parse, no `Image/Pixels`, or
 *   sizes that are not positive integers
 *
 * Notes: without `TiffData`, planes are stored in IFD order following `DimensionOrder`. A
 * `TiffData` element maps `PlaneCount` consecutive planes (in DimensionOrder, starting at
 * FirstZ/FirstC/FirstT) to consecutive IFDs starting at `IFD`; PlaneCount defaults to 1 when `IFD`
 * is given, else to all planes (from memory). UUID/FileName references to other files are ignored.
 * References: OME data model schema 2016-06 (Pixels, Channel, TiffData, Objective, ObjectiveSettings,
 * ImagingEnvironment); QC-PRACTICE.md §5.1.
 *
 * @example
 * parseOmeXml('<OME><Image><Pixels SizeX="4" SizeY="4" SizeZ="2" SizeC="1" SizeT="1" DimensionOrder="XYZCT" PhysicalSizeZ="200" PhysicalSizeZUnit="nm"/></Image></OME>', 2).physicalSizeUm.z; // 0.2
 */
export function parseOmeXml(text: string, ifdCount: number): OmeMetadata {
  let doc: XmlNode;
  try {
    const parser = new XMLParser({
      ignoreAttributes: false,
      attributeNamePrefix: "@",
      removeNSPrefix: true,
      parseTagValue: false,
      parseAttributeValue: false,
      processEntities: false,
      isArray: (name) => ARRAY_TAGS.has(name),
    });
    doc = parser.parse(text, true) as XmlNode;
  } catch (e) {
    throw new TiffInputError(
      "bad_metadata",
      `The OME-XML description is not well-formed XML (${e instanceof Error ? e.message.slice(0, 200) : "parse error"}).`,
    );
  }
  const warnings: string[] = [];
  const ome = obj(doc.OME);
  const images = arr(ome?.Image);
  const image = obj(images[0]);
  const pixels = obj(image?.Pixels);
  if (!ome || !image || !pixels)
    throw new TiffInputError("bad_metadata", "The OME-XML description has no OME/Image/Pixels element.");
  if (images.length > 1)
    warnings.push(`The OME-XML describes ${images.length} images; only the first is read.`);

  const size = (k: string): number => {
    const v = num(pixels[`@${k}`]);
    if (v === null || !Number.isInteger(v) || v < 1) {
      throw new TiffInputError(
        "bad_metadata",
        `OME-XML Pixels@${k} is missing or not a positive integer (${String(pixels[`@${k}`])}).`,
      );
    }
    return v;
  };
  const sizeX = size("SizeX");
  const sizeY = size("SizeY");
  const sizeZ = size("SizeZ");
  const sizeC = size("SizeC");
  const sizeT = size("SizeT");
  const dimensionOrder = str(pixels["@DimensionOrder"]) ?? "XYZCT";
  if (!/^XY(ZCT|ZTC|CZT|CTZ|TZC|TCZ)$/.test(dimensionOrder)) {
    throw new TiffInputError(
      "bad_metadata",
      `OME-XML DimensionOrder "${dimensionOrder}" is not one of the six XY… orders.`,
    );
  }
  const nPlanes = sizeZ * sizeC * sizeT;
  if (nPlanes > MAX_PLANES)
    throw new TiffInputError(
      "bad_metadata",
      `OME-XML declares ${nPlanes} planes (SizeZ×SizeC×SizeT), more than ${MAX_PLANES}.`,
    );

  const physical = (axis: "X" | "Y" | "Z"): number | null => {
    const raw = pixels[`@PhysicalSize${axis}`];
    if (raw === undefined) return null;
    const v = num(raw);
    const unit = str(pixels[`@PhysicalSize${axis}Unit`]) ?? "µm";
    const um = v === null ? null : lengthToUm(v, unit);
    if (um === null || !(um > 0)) {
      warnings.push(`OME-XML PhysicalSize${axis}="${String(raw)}" ${unit} is not a usable length; ignored.`);
      return null;
    }
    return um;
  };

  // Plane → IFD mapping.
  const dims = dimensionOrder.slice(2).split("") as Array<"Z" | "C" | "T">;
  const sizes = { Z: sizeZ, C: sizeC, T: sizeT };
  const planeToIfd = new Array<number>(nPlanes).fill(-1);
  const toOurIndex = (raster: number): number => {
    // raster index in DimensionOrder → (z, c, t) → our index z + Z*(c + C*t)
    const coord = { Z: 0, C: 0, T: 0 };
    let r = raster;
    for (const d of dims) {
      coord[d] = r % sizes[d];
      r = Math.floor(r / sizes[d]);
    }
    return coord.Z + sizeZ * (coord.C + sizeC * coord.T);
  };
  const rasterOf = (z: number, c: number, t: number): number => {
    const coord = { Z: z, C: c, T: t };
    let r = 0;
    for (let i = dims.length - 1; i >= 0; i--) r = r * sizes[dims[i]] + coord[dims[i]];
    return r;
  };
  const tiffData = arr(pixels.TiffData)
    .map(obj)
    .filter((x): x is XmlNode => x !== null);
  if (tiffData.length === 0) {
    for (let p = 0; p < nPlanes; p++) planeToIfd[toOurIndex(p)] = p < ifdCount ? p : -1;
  } else {
    for (const td of tiffData) {
      const ifd = num(td["@IFD"]);
      const firstZ = num(td["@FirstZ"]) ?? 0;
      const firstC = num(td["@FirstC"]) ?? 0;
      const firstT = num(td["@FirstT"]) ?? 0;
      const planeCount = num(td["@PlaneCount"]) ?? (ifd !== null ? 1 : nPlanes);
      const ints = [ifd ?? 0, firstZ, firstC, firstT, planeCount];
      if (
        ints.some((v) => !Number.isInteger(v) || v < 0) ||
        firstZ >= sizeZ ||
        firstC >= sizeC ||
        firstT >= sizeT
      ) {
        throw new TiffInputError(
          "bad_metadata",
          "OME-XML TiffData has an invalid IFD, FirstZ/C/T or PlaneCount.",
        );
      }
      const start = rasterOf(firstZ, firstC, firstT);
      for (let k = 0; k < planeCount && start + k < nPlanes; k++) {
        const target = (ifd ?? 0) + k;
        planeToIfd[toOurIndex(start + k)] = target < ifdCount ? target : -1;
      }
    }
  }

  const channels: OmeChannel[] = arr(pixels.Channel).map((c) => {
    const ch = obj(c) ?? {};
    return {
      name: str(ch["@Name"]),
      emissionWavelengthNm: wavelengthNm(ch["@EmissionWavelength"], ch["@EmissionWavelengthUnit"]),
      excitationWavelengthNm: wavelengthNm(ch["@ExcitationWavelength"], ch["@ExcitationWavelengthUnit"]),
      pinholeSizeUm: lengthOrNull(ch["@PinholeSize"], ch["@PinholeSizeUnit"], "µm"),
      acquisitionMode: str(ch["@AcquisitionMode"]),
    };
  });

  const settings = obj(image.ObjectiveSettings);
  const objectives = arr(ome.Instrument)
    .flatMap((i) => arr(obj(i)?.Objective))
    .map(obj)
    .filter((x): x is XmlNode => x !== null);
  const settingsId = str(settings?.["@ID"]);
  const objectiveNode =
    (settingsId ? objectives.find((o) => str(o["@ID"]) === settingsId) : undefined) ??
    (objectives.length === 1 ? objectives[0] : undefined);
  const objective = objectiveNode
    ? {
        lensNa: num(objectiveNode["@LensNA"]),
        immersion: str(objectiveNode["@Immersion"]),
        nominalMagnification: num(objectiveNode["@NominalMagnification"]),
      }
    : null;

  const env = obj(image.ImagingEnvironment);
  const temperatureC = temperatureToC(env?.["@Temperature"], env?.["@TemperatureUnit"]);
  const acquisitionDate = str(
    typeof image.AcquisitionDate === "object" ? obj(image.AcquisitionDate)?.["#text"] : image.AcquisitionDate,
  );

  return {
    imageCount: images.length,
    sizeX,
    sizeY,
    sizeZ,
    sizeC,
    sizeT,
    dimensionOrder,
    pixelType: str(pixels["@Type"]),
    physicalSizeUm: { x: physical("X"), y: physical("Y"), z: physical("Z") },
    channels,
    objective,
    immersionRefractiveIndex: num(settings?.["@RefractiveIndex"]),
    temperatureC,
    acquisitionDate,
    planeToIfd,
    warnings,
  };
}

function obj(v: unknown): XmlNode | null {
  return v !== null && typeof v === "object" && !Array.isArray(v) ? (v as XmlNode) : null;
}
function arr(v: unknown): unknown[] {
  return Array.isArray(v) ? v : v === undefined ? [] : [v];
}
/** The five predefined entities (XML 1.0 §4.6); with character references (§4.1), decoded by `str`. */
const XML_ENTITIES: Record<string, string> = { lt: "<", gt: ">", amp: "&", quot: '"', apos: "'" };
/**
 * Entity references in an attribute value or text. The parser runs with `processEntities: false`,
 * so that no DOCTYPE-declared entity is ever expanded; only the predefined entities and character
 * references are decoded here (in one pass, so "&amp;lt;" stays "&lt;").
 */
function decodeXmlText(s: string): string {
  return s.replace(/&(lt|gt|amp|quot|apos|#[0-9]{1,7}|#x[0-9a-fA-F]{1,6});/g, (ref, name: string) => {
    if (name[0] !== "#") return XML_ENTITIES[name]!;
    const cp = name[1] === "x" ? parseInt(name.slice(2), 16) : parseInt(name.slice(1), 10);
    return cp > 0 && cp <= 0x10ffff && !(cp >= 0xd800 && cp <= 0xdfff) ? String.fromCodePoint(cp) : ref;
  });
}
function str(v: unknown): string | null {
  return typeof v === "string" && v.trim() !== "" ? decodeXmlText(v.trim()) : null;
}
function num(v: unknown): number | null {
  const s = str(v);
  if (s === null) return null;
  const n = Number(s);
  return Number.isFinite(n) ? n : null;
}
function lengthOrNull(value: unknown, unit: unknown, defaultUnit: string): number | null {
  const v = num(value);
  if (v === null) return null;
  const um = lengthToUm(v, str(unit) ?? defaultUnit);
  return um !== null && um > 0 ? um : null;
}
// Source: OME data model schema 2016-06 — wavelengths default to nm.
function wavelengthNm(value: unknown, unit: unknown): number | null {
  const um = lengthOrNull(value, unit, "nm");
  return um === null ? null : Math.round(um * 1e3 * 1e6) / 1e6;
}
// Source: OME data model schema 2016-06 — Temperature defaults to °C (UnitsTemperature: °C, °F, K).
function temperatureToC(value: unknown, unit: unknown): number | null {
  const v = num(value);
  if (v === null) return null;
  const u = (str(unit) ?? "°C").replace("°", "").toUpperCase();
  if (u === "C") return v;
  if (u === "K") return v - 273.15;
  if (u === "F") return ((v - 32) * 5) / 9;
  return null;
}
