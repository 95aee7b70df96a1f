import { fromArrayBuffer } from "geotiff";
import { describe, expect, it } from "vitest";
import { buildOmeXml, parseOmeXml, readTiffStack, writeOmeTiff } from "../../../../src/lib/tiff";

/** An invented float32 volume: distinct values, negatives and fractions, so any mix-up shows. */
function makeVolume(nz: number, ny: number, nx: number): Float32Array {
  const data = new Float32Array(nz * ny * nx);
  for (let z = 0; z < nz; z++)
    for (let y = 0; y < ny; y++)
      for (let x = 0; x < nx; x++) data[(z * ny + y) * nx + x] = z * 1000 + y * 10 + x - 0.375 * (x % 3);
  return data;
}

const voxelSizeUm = { x: 0.0425, y: 0.05, z: 0.125 };

describe("writeOmeTiff", () => {
  it("round-trips a float32 volume through our own reader: values, shape, voxel size, OME-XML source", async () => {
    const shape: [number, number, number] = [5, 6, 7];
    const data = makeVolume(...shape);
    const bytes = writeOmeTiff(
      { data, shape, voxelSizeUm },
      {
        imageName: "averaged PSF",
        emissionWavelengthNm: 520,
        uuid: "urn:uuid:00000000-0000-4000-8000-000000000001",
      },
    );
    const { stack, metadata } = await readTiffStack(bytes);
    expect(metadata.format).toBe("ome-tiff");
    expect(metadata.dtype).toBe("float32");
    expect(metadata.pageCount).toBe(5);
    expect(stack.shape).toEqual(shape);
    expect(stack.data).toBeInstanceOf(Float32Array);
    expect(Array.from(stack.data)).toEqual(Array.from(data));
    expect(stack.voxelSizeUm).toEqual(voxelSizeUm);
    expect(metadata.voxelSizeUm.x?.source).toBe("ome-xml");
    expect(metadata.voxelSizeUm.y?.source).toBe("ome-xml");
    expect(metadata.voxelSizeUm.z?.source).toBe("ome-xml");
    expect(metadata.slices).toEqual({ value: 5, source: "ome-xml" });
    expect(metadata.emissionWavelengthNm?.value).toBe(520);
  });

  it("is a plain TIFF to an independent reader: one 32-bit float page per plane, OME-XML only on the first", async () => {
    // Source: TIFF 6.0 specification (SampleFormat 3 = IEEE float; ImageDescription tag 270);
    // OME-TIFF layout, QC-PRACTICE.md §5.1 (OME-XML in the first page's ImageDescription, one page per plane).
    const shape: [number, number, number] = [3, 4, 5];
    const data = makeVolume(...shape);
    const bytes = writeOmeTiff({ data, shape, voxelSizeUm });
    const tiff = await fromArrayBuffer(
      bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer,
    );
    expect(await tiff.getImageCount()).toBe(3);
    for (let z = 0; z < 3; z++) {
      const image = await tiff.getImage(z);
      expect(image.getWidth()).toBe(5);
      expect(image.getHeight()).toBe(4);
      expect(image.getBitsPerSample()).toBe(32);
      expect(image.getSampleFormat()).toBe(3);
      const [plane] = (await image.readRasters()) as unknown as Float32Array[];
      expect(Array.from(plane)).toEqual(Array.from(data.subarray(z * 20, (z + 1) * 20)));
      const fd = image.fileDirectory;
      if (z === 0) expect(String(await fd.loadValue(270))).toMatch(/^<\?xml[^>]*>\s*<OME /);
      else expect(fd.hasTag(270)).toBe(false);
    }
  });

  it("writes an OME-XML block that states sizes, order, type, µm units and maps every plane", () => {
    // Source: OME data model schema 2016-06 (QC-PRACTICE.md §5.1): Pixels@SizeX/Y/Z/C/T, DimensionOrder,
    // Type, PhysicalSize*(Unit); TiffData maps planes to IFDs.
    const xml = buildOmeXml({ shape: [4, 3, 2], voxelSizeUm }, "float32", { description: 'a <b> & "c"' });
    expect(xml).toContain('DimensionOrder="XYZCT"');
    expect(xml).toContain('Type="float"');
    expect(xml).toContain('PhysicalSizeZ="0.125" PhysicalSizeZUnit="µm"');
    expect(xml).toContain('<TiffData IFD="0" PlaneCount="4"/>');
    expect(xml).toContain("a &lt;b&gt; &amp; &quot;c&quot;");
    const parsed = parseOmeXml(xml, 4);
    expect([parsed.sizeX, parsed.sizeY, parsed.sizeZ, parsed.sizeC, parsed.sizeT]).toEqual([2, 3, 4, 1, 1]);
    expect(parsed.physicalSizeUm).toEqual(voxelSizeUm);
    expect(parsed.planeToIfd).toEqual([0, 1, 2, 3]);
    expect(parsed.warnings).toEqual([]);
  });

  it("also writes 16-bit unsigned volumes", async () => {
    const data = new Uint16Array(2 * 3 * 3).map((_, i) => i * 3000);
    const { stack, metadata } = await readTiffStack(
      writeOmeTiff({ data, shape: [2, 3, 3], voxelSizeUm: { x: 0.1, y: 0.1, z: 0.3 } }),
    );
    expect(metadata.dtype).toBe("uint16");
    expect(Array.from(stack.data)).toEqual(Array.from(data));
  });

  it("rejects a bad shape, length or voxel size with a RangeError naming it", () => {
    const data = new Float32Array(8);
    expect(() => writeOmeTiff({ data, shape: [2, 2, 3], voxelSizeUm })).toThrow(/volume\.data/);
    expect(() => writeOmeTiff({ data, shape: [2, 2, 0] as [number, number, number], voxelSizeUm })).toThrow(
      RangeError,
    );
    expect(() => writeOmeTiff({ data, shape: [2, 2, 2], voxelSizeUm: { ...voxelSizeUm, z: 0 } })).toThrow(
      /voxelSizeUm\.z/,
    );
    expect(() =>
      writeOmeTiff({ data: [1, 2] as unknown as Float32Array, shape: [1, 1, 2], voxelSizeUm }),
    ).toThrow(TypeError);
  });
});
