import { readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { sampleOmeXml, sampleStack, SAMPLE_VOXEL_UM } from "../../../../fixtures/fixture-set";
import { stackToPages, writeTiff, type WriteTiffOptions } from "../../../../fixtures/tiff-writer";
import {
  inspectTiff,
  lengthToUm,
  mergeUserMetadata,
  parseImageJDescription,
  parseOmeXml,
  readTiffStack,
  TiffInputError,
  voxelSizeFromMetadata,
} from "../../../../src/lib/tiff";

const samplesDir = join(__dirname, "../../../../fixtures/samples");
const pages = () => stackToPages(sampleStack("uint16", 0, 0, [3, 16, 16]).stack);
const inspect = (options: WriteTiffOptions) => inspectTiff(writeTiff(pages(), options));

describe("parseImageJDescription", () => {
  it("reads the stack keys", () => {
    // Source: ImageJ description keys (QC-PRACTICE.md §5.2).
    const d = parseImageJDescription(
      "ImageJ=1.54f\nimages=24\nchannels=2\nslices=6\nframes=2\nhyperstack=true\nunit=micron\nspacing=0.3\nloop=false\n",
    )!;
    expect(d).toMatchObject({
      version: "1.54f",
      images: 24,
      channels: 2,
      slices: 6,
      frames: 2,
      hyperstack: true,
      unit: "micron",
      spacing: 0.3,
    });
  });
  it("returns null for other text and nulls for bad values", () => {
    expect(parseImageJDescription("hello")).toBeNull();
    const d = parseImageJDescription("ImageJ=\nimages=-3\nslices=abc\nspacing=NaN\n")!;
    expect([d.images, d.slices, d.spacing, d.unit]).toEqual([null, null, null, null]);
  });
});

describe("lengthToUm", () => {
  it("converts the OME and ImageJ length units", () => {
    // Source: OME data model schema 2016-06, UnitsLength (from memory); ImageJ writes micron/um/\u00B5m.
    expect(lengthToUm(250, "nm")).toBeCloseToAbs(0.25, 1e-12);
    expect(lengthToUm(0.001, "mm")).toBeCloseToAbs(1, 1e-12);
    expect(lengthToUm(1e-6, "m")).toBeCloseToAbs(1, 1e-12);
    expect(lengthToUm(2000, "Å")).toBeCloseToAbs(0.2, 1e-12);
    expect(lengthToUm(0.2, "µm")).toBe(0.2);
    expect(lengthToUm(0.2, "\u03bcm")).toBe(0.2);
    expect(lengthToUm(0.2, "\\u00B5m")).toBe(0.2);
    expect(lengthToUm(0.2, "micron")).toBe(0.2);
    expect(lengthToUm(1, "pixel")).toBeNull();
  });
});

describe("parseOmeXml", () => {
  it("reads sizes, physical sizes with units and acquisition settings", () => {
    // Source: OME data model schema 2016-06 (Pixels, Channel, Objective, ObjectiveSettings, ImagingEnvironment).
    const m = parseOmeXml(sampleOmeXml(2, 2, "XYCZT"), 64);
    expect([m.sizeX, m.sizeY, m.sizeZ, m.sizeC, m.sizeT, m.dimensionOrder]).toEqual([
      48,
      48,
      16,
      2,
      2,
      "XYCZT",
    ]);
    expect(m.physicalSizeUm.x).toBeCloseToAbs(0.1, 1e-9);
    expect(m.physicalSizeUm.z).toBeCloseToAbs(0.25, 1e-9);
    expect(m.objective).toEqual({ lensNa: 1.4, immersion: "Oil", nominalMagnification: 63 });
    expect(m.immersionRefractiveIndex).toBe(1.518);
    expect(m.temperatureC).toBe(22.5);
    expect(m.acquisitionDate).toBe("2026-01-15T10:20:30");
    expect(m.channels[1]).toEqual({
      name: "ch1",
      emissionWavelengthNm: 600,
      excitationWavelengthNm: 561,
      pinholeSizeUm: 51,
      acquisitionMode: "LaserScanningConfocalMicroscopy",
    });
  });
  it("maps planes by DimensionOrder when there is no per-plane TiffData", () => {
    const xml = (order: string) =>
      `<OME><Image><Pixels DimensionOrder="${order}" SizeX="2" SizeY="2" SizeZ="3" SizeC="2" SizeT="1"/></Image></OME>`;
    // index z + Z*(c + C*t) → IFD
    expect(parseOmeXml(xml("XYZCT"), 6).planeToIfd).toEqual([0, 1, 2, 3, 4, 5]);
    expect(parseOmeXml(xml("XYCZT"), 6).planeToIfd).toEqual([0, 2, 4, 1, 3, 5]);
  });
  it("converts wavelengths in µm and temperatures in K, and warns on unusable sizes", () => {
    const m = parseOmeXml(
      `<OME><Image><ImagingEnvironment Temperature="310.15" TemperatureUnit="K"/><Pixels DimensionOrder="XYZCT" SizeX="2" SizeY="2" SizeZ="2" SizeC="1" SizeT="1" PhysicalSizeX="-1" PhysicalSizeZ="0.5" PhysicalSizeZUnit="parsec"><Channel EmissionWavelength="0.52" EmissionWavelengthUnit="µm"/></Pixels></Image></OME>`,
      2,
    );
    expect(m.temperatureC).toBeCloseToAbs(37, 1e-9);
    expect(m.channels[0].emissionWavelengthNm).toBeCloseToAbs(520, 1e-6);
    expect(m.physicalSizeUm).toEqual({ x: null, y: null, z: null });
    expect(m.warnings.length).toBe(2);
  });
  it("refuses malformed XML, missing Pixels and invalid sizes with bad_metadata", () => {
    for (const xml of [
      "<OME><Image>",
      "<OME></OME>",
      `<OME><Image><Pixels SizeX="0" SizeY="2" SizeZ="1" SizeC="1" SizeT="1"/></Image></OME>`,
      `<OME><Image><Pixels DimensionOrder="XYQCT" SizeX="2" SizeY="2" SizeZ="1" SizeC="1" SizeT="1"/></Image></OME>`,
    ]) {
      expect(() => parseOmeXml(xml, 1)).toThrow(TiffInputError);
      try {
        parseOmeXml(xml, 1);
      } catch (e) {
        expect((e as TiffInputError).code).toBe("bad_metadata");
      }
    }
  });
});

describe("voxel size from the resolution tags and the ImageJ description", () => {
  // Source: TIFF 6.0 specification, section 8 (XResolution = pixels per ResolutionUnit; 2 inch, 3 cm);
  // QC-PRACTICE.md §5.2 (pixel width = 1/XResolution; 72 dpi = uncalibrated; unit none → description unit).
  const ij = "ImageJ=1.54f\nimages=3\nslices=3\nunit=micron\nspacing=0.4\n";

  it("unit none + ImageJ unit=micron: 1/XResolution µm, z from spacing", async () => {
    const m = await inspect({ description: ij, resolution: { x: 5, y: 4, unit: 1 } });
    expect(m.voxelSizeUm.x).toEqual({ value: 0.2, source: "resolution-tag" });
    expect(m.voxelSizeUm.y).toEqual({ value: 0.25, source: "resolution-tag" });
    expect(m.voxelSizeUm.z).toEqual({ value: 0.4, source: "imagej" });
    expect(m.warnings).toEqual([]);
  });
  it("ResolutionUnit cm and inch are honoured", async () => {
    const cm = await inspect({ resolution: { x: 50000, y: 50000, unit: 3 } });
    expect(cm.voxelSizeUm.x!.value).toBeCloseToAbs(0.2, 1e-9);
    const inch = await inspect({ resolution: { x: 127000, y: 127000, unit: 2 } });
    expect(inch.voxelSizeUm.x!.value).toBeCloseToAbs(0.2, 1e-9);
  });
  it("72 dpi is uncalibrated: no pixel size and a warning", async () => {
    const m = await inspect({ resolution: { x: 72, y: 72, unit: 2 } });
    expect(m.voxelSizeUm.x).toBeNull();
    expect(m.warnings.map((w) => w.code)).toEqual(
      expect.arrayContaining(["uncalibrated_resolution", "no_pixel_size", "no_z_spacing"]),
    );
  });
  it("unit none without a description unit gives no pixel size", async () => {
    const m = await inspect({ resolution: { x: 5, y: 5, unit: 1 } });
    expect(m.voxelSizeUm.x).toBeNull();
  });
  it("ImageJ spacing in nm is converted; a missing spacing asks the user", async () => {
    const nm = await inspect({
      description: "ImageJ=1.54f\nimages=3\nslices=3\nunit=nm\nspacing=300\n",
      resolution: { x: 0.01, y: 0.01, unit: 1 },
    });
    expect(nm.voxelSizeUm.z!.value).toBeCloseToAbs(0.3, 1e-12);
    expect(nm.voxelSizeUm.x!.value).toBeCloseToAbs(0.1, 1e-9);
    const none = await inspect({ description: "ImageJ=1.54f\nimages=3\nslices=3\nunit=micron\n" });
    expect(none.voxelSizeUm.z).toBeNull();
    expect(none.warnings.find((w) => w.code === "no_z_spacing")?.message).toBe(
      "No z-spacing in the file: enter it.",
    );
  });
  it("OME-XML physical sizes win over the resolution tags", async () => {
    const m = await inspectTiff(readFileSync(join(samplesDir, "own-ome-xyzct.tif")));
    expect(m.voxelSizeUm.x!.source).toBe("ome-xml");
    expect(m.voxelSizeUm.x!.value).toBeCloseToAbs(SAMPLE_VOXEL_UM.x, 1e-9);
    expect(m.numericalAperture).toEqual({ value: 1.4, source: "ome-xml" });
    expect(m.immersion).toEqual({ value: "Oil", source: "ome-xml" });
    expect(m.magnification).toEqual({ value: 63, source: "ome-xml" });
    expect(m.immersionRefractiveIndex).toEqual({ value: 1.518, source: "ome-xml" });
  });
  it("per-channel OME values follow the selected channel", async () => {
    const bytes = readFileSync(join(samplesDir, "own-ome-xyczt.tif"));
    const c1 = await inspectTiff(bytes, { channel: 1 });
    expect(c1.emissionWavelengthNm).toEqual({ value: 600, source: "ome-xml" });
    expect(c1.excitationWavelengthNm).toEqual({ value: 561, source: "ome-xml" });
    expect(c1.pinholeSizeUm).toEqual({ value: 51, source: "ome-xml" });
    expect(c1.acquisitionMode!.value).toBe("LaserScanningConfocalMicroscopy");
    expect(c1.temperatureC).toEqual({ value: 22.5, source: "ome-xml" });
    expect(c1.acquisitionDate!.value).toBe("2026-01-15T10:20:30");
  });
  it("a plain file has default counts and no voxel size", async () => {
    const m = await inspect({});
    expect(m.format).toBe("plain");
    expect(m.slices).toEqual({ value: 3, source: "default" });
    expect(m.voxelSizeUm).toEqual({ x: null, y: null, z: null });
  });
});

describe("mergeUserMetadata", () => {
  it("applies user values with source 'user', resolves warnings, leaves the input alone", async () => {
    const { metadata, stack } = await readTiffStack(writeTiff(pages()));
    expect(stack.voxelSizeUm).toBeNull();
    const before = JSON.stringify(metadata);
    const merged = mergeUserMetadata(metadata, {
      voxelSizeUm: { x: 0.1, y: 0.1, z: 0.3 },
      numericalAperture: 1.2,
      immersion: "Water",
      emissionWavelengthNm: 510,
    });
    expect(JSON.stringify(metadata)).toBe(before);
    expect(merged.voxelSizeUm.z).toEqual({ value: 0.3, source: "user" });
    expect(merged.numericalAperture).toEqual({ value: 1.2, source: "user" });
    expect(merged.warnings.map((w) => w.code)).not.toContain("no_z_spacing");
    expect(merged.warnings.map((w) => w.code)).not.toContain("no_pixel_size");
    expect(voxelSizeFromMetadata(merged)).toEqual({ x: 0.1, y: 0.1, z: 0.3 });
  });
  it("keeps file values for fields the user left out and rejects non-positive values", async () => {
    const m = await inspectTiff(readFileSync(join(samplesDir, "own-ome-xyzct.tif")));
    const merged = mergeUserMetadata(m, { voxelSizeUm: { z: 0.5 } });
    expect(merged.voxelSizeUm.x!.source).toBe("ome-xml");
    expect(merged.voxelSizeUm.z).toEqual({ value: 0.5, source: "user" });
    expect(() => mergeUserMetadata(m, { voxelSizeUm: { z: 0 } })).toThrow(
      /voxelSizeUm\.z must be a positive finite number \(got 0\)/,
    );
    expect(() => mergeUserMetadata(m, { numericalAperture: Number.NaN })).toThrow(RangeError);
  });
});

describe("page bookkeeping", () => {
  it("warns about pages beyond the ImageJ image count and refuses fewer pages than declared", async () => {
    const extra = await inspect({
      description: "ImageJ=1.54f\nimages=2\nslices=2\nunit=micron\nspacing=0.2\n",
    });
    expect(extra.slices.value).toBe(2);
    expect(extra.warnings.map((w) => w.code)).toContain("extra_pages");
    await expect(inspect({ description: "ImageJ=1.54f\nimages=6\nslices=6\n" })).rejects.toMatchObject({
      code: "bad_metadata",
    });
  });
  it("skips reduced-resolution pages (NewSubfileType bit 0) with a warning", async () => {
    const m = await inspect({ extraTags: (p) => (p === 2 ? [{ tag: 254, type: 4, values: [1] }] : []) });
    expect(m.slices.value).toBe(2);
    expect(m.pageCount).toBe(3);
    expect(m.warnings.map((w) => w.code)).toContain("reduced_resolution_pages");
  });
});
