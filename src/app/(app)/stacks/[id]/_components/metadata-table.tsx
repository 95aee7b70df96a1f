import type { MetadataSource, Sourced, TiffMetadata } from "@/lib/tiff";

const SOURCE_LABEL: Record<MetadataSource, string> = {
  "ome-xml": "OME-XML in the file",
  imagej: "ImageJ description in the file",
  "resolution-tag": "TIFF resolution tags",
  user: "entered at upload",
  default: "assumed (nothing in the file)",
};

const STRUCTURE = "TIFF structure";

type Row = { label: string; value: string; source: string; missing?: boolean; numeric?: boolean };

function sourced<T>(label: string, s: Sourced<T> | null | undefined, fmt: (v: T) => string): Row {
  if (!s) return { label, value: "—", source: "not in the file", missing: true };
  return {
    label,
    value: fmt(s.value),
    source: SOURCE_LABEL[s.source] ?? s.source,
    numeric: typeof s.value === "number",
  };
}

/** A value the reader took from the TIFF tags themselves. */
function plain(label: string, value: string | number | null | undefined): Row {
  return value == null
    ? { label, value: "—", source: STRUCTURE, missing: true }
    : { label, value: String(value), source: STRUCTURE, numeric: typeof value === "number" };
}

const n = (digits: number) => (v: number) => (Number.isFinite(v) ? v.toFixed(digits) : String(v));
const text = (v: string) => v;
const int = (v: number) => String(v);

/** The metadata record read from the file at upload: every value with where it came from. */
export function MetadataTable({ metadata }: { metadata: TiffMetadata }) {
  const m = metadata;
  const vox = m.voxelSizeUm ?? { x: null, y: null, z: null };
  const rows: Row[] = [
    plain("Convention", m.format),
    plain("Byte order", m.byteOrder),
    plain("BigTIFF", m.bigTiff == null ? null : m.bigTiff ? "yes" : "no"),
    plain("Pages (IFDs)", m.pageCount),
    plain("Width (px)", m.width),
    plain("Height (px)", m.height),
    plain("Sample type", m.dtype),
    plain("Compression", m.compression),
    plain("Predictor", m.predictor),
    plain("Layout", m.tiled == null ? null : m.tiled ? "tiles" : "strips"),
    sourced("Channels", m.channels, int),
    sourced("Slices (planes)", m.slices, int),
    sourced("Frames (time points)", m.frames, int),
    sourced("Dimension order", m.dimensionOrder, text),
    plain("Decoded stack (bytes)", m.stackBytes),
    sourced("Pixel width x (µm)", vox.x, n(4)),
    sourced("Pixel height y (µm)", vox.y, n(4)),
    sourced("z-step (µm)", vox.z, n(4)),
    sourced("Numerical aperture", m.numericalAperture, n(2)),
    sourced("Immersion", m.immersion, text),
    sourced("Magnification (×)", m.magnification, n(0)),
    sourced("Immersion refractive index", m.immersionRefractiveIndex, n(4)),
    sourced("Emission wavelength (nm)", m.emissionWavelengthNm, n(0)),
    sourced("Excitation wavelength (nm)", m.excitationWavelengthNm, n(0)),
    sourced("Pinhole diameter (µm)", m.pinholeSizeUm, n(1)),
    sourced("Acquisition mode", m.acquisitionMode, text),
    sourced("Temperature (°C)", m.temperatureC, n(1)),
    sourced("Acquired (as written in the file)", m.acquisitionDate, text),
  ];
  return (
    <table className="data-table" data-testid="stack-metadata">
      <thead>
        <tr>
          <th>Value</th>
          <th>Read</th>
          <th>Source</th>
        </tr>
      </thead>
      <tbody>
        {rows.map((r) => (
          <tr key={r.label}>
            <td>{r.label}</td>
            <td className={r.numeric ? "num" : "font-mono text-xs"}>{r.value}</td>
            <td className={r.missing ? "text-ink-faint" : "text-ink-soft"}>{r.source}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}
