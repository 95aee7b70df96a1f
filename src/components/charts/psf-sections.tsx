"use client";
import { useMemo } from "react";
import { Plot, axis, baseLayout, plotConfig } from "./plot";

export interface VolumeView {
  shape: [number, number, number];
  voxelSizeUm: { x: number; y: number; z: number };
  data: Float32Array;
}

export function decodeFloat32(base64: string): Float32Array {
  const bin = atob(base64);
  const bytes = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i++) bytes[i] = bin.charCodeAt(i);
  return new Float32Array(bytes.buffer);
}

/** xy, xz and yz sections through the centre of a small volume, as heatmaps in µm. */
export function PsfSections({ volume, title }: { volume: VolumeView; title: string }) {
  const [nz, ny, nx] = volume.shape;
  const { x: dx, y: dy, z: dz } = volume.voxelSizeUm;
  const cz = nz >> 1;
  const cy = ny >> 1;
  const cx = nx >> 1;
  const sections = useMemo(() => {
    const at = (z: number, y: number, x: number) => volume.data[(z * ny + y) * nx + x]!;
    const xs = Array.from({ length: nx }, (_, i) => (i - cx) * dx);
    const ys = Array.from({ length: ny }, (_, i) => (i - cy) * dy);
    const zs = Array.from({ length: nz }, (_, i) => (i - cz) * dz);
    return {
      xy: { x: xs, y: ys, z: ys.map((_, y) => xs.map((_, x) => at(cz, y, x))) },
      xz: { x: xs, y: zs, z: zs.map((_, z) => xs.map((_, x) => at(z, cy, x))) },
      yz: { x: ys, y: zs, z: zs.map((_, z) => ys.map((_, y) => at(z, y, cx))) },
    };
  }, [volume, nx, ny, nz, cx, cy, cz, dx, dy, dz]);
  const panel = (key: "xy" | "xz" | "yz", xt: string, yt: string) => (
    <Plot
      key={key}
      data={[
        {
          type: "heatmap",
          x: sections[key].x,
          y: sections[key].y,
          z: sections[key].z,
          colorscale: "Viridis",
          showscale: false,
        },
      ]}
      layout={{
        ...baseLayout,
        height: 260,
        margin: { l: 50, r: 10, t: 30, b: 45 },
        title: { text: `${key} section`, font: { size: 12 } },
        xaxis: axis(xt),
        yaxis: { ...axis(yt), scaleanchor: "x", scaleratio: 1, autorange: key === "xy" ? "reversed" : true },
      }}
      config={plotConfig}
      useResizeHandler
      style={{ width: "100%" }}
    />
  );
  return (
    <div>
      <h3 className="mb-1 text-sm font-semibold">{title}</h3>
      <div className="grid gap-2 md:grid-cols-3" data-testid="psf-sections">
        {panel("xy", "x (µm)", "y (µm)")}
        {panel("xz", "x (µm)", "z, into the sample (µm)")}
        {panel("yz", "y (µm)", "z, into the sample (µm)")}
      </div>
    </div>
  );
}
