"use client";
import { useQuery } from "@tanstack/react-query";
import { Plot, axis, baseLayout, plotConfig } from "@/components/charts/plot";
import { PsfSections, decodeFloat32 } from "@/components/charts/psf-sections";

interface Sections {
  shape: [number, number, number];
  voxelSizeUm: { x: number; y: number; z: number };
  centreOffsetPx: { x: number; y: number; z: number };
  fit: {
    amplitude: number | null;
    background: number | null;
    fwhmXUm: number | null;
    fwhmZUm: number | null;
  };
  dataBase64: string;
}

const SIGMA_PER_FWHM = 1 / (2 * Math.sqrt(2 * Math.LN2));

/** xy/xz/yz sections through one bead, and its x and z profiles with the fitted Gaussians overlaid. */
export function BeadViewer({ measurementId, beadId }: { measurementId: string; beadId: number }) {
  const { data, error, isLoading } = useQuery({
    queryKey: ["bead-sections", measurementId, beadId],
    queryFn: async () => {
      const res = await fetch(`/api/v1/measurements/${measurementId}/beads/${beadId}`);
      const j = await res.json();
      if (!res.ok) throw new Error(j?.error?.message ?? `HTTP ${res.status}`);
      return j as Sections;
    },
  });
  if (isLoading) return <p className="text-sm text-ink-soft">Reading bead {beadId} from the stored stack…</p>;
  if (error || !data) return <p className="text-sm text-bad">{(error as Error)?.message}</p>;
  const volume = { shape: data.shape, voxelSizeUm: data.voxelSizeUm, data: decodeFloat32(data.dataBase64) };
  const [nz, ny, nx] = data.shape;
  const cz = nz >> 1;
  const cy = ny >> 1;
  const cx = nx >> 1;
  const at = (z: number, y: number, x: number) => volume.data[(z * ny + y) * nx + x]!;
  const xs = Array.from({ length: nx }, (_, i) => (i - cx - data.centreOffsetPx.x) * data.voxelSizeUm.x);
  const zs = Array.from({ length: nz }, (_, i) => (i - cz - data.centreOffsetPx.z) * data.voxelSizeUm.z);
  const gauss = (u: number[], fwhm: number | null) =>
    fwhm && data.fit.amplitude != null && data.fit.background != null
      ? u.map(
          (v) =>
            data.fit.background! +
            data.fit.amplitude! * Math.exp(-(v * v) / (2 * (fwhm * SIGMA_PER_FWHM) ** 2)),
        )
      : [];
  const profile = (title: string, u: number[], y: number[], fwhm: number | null, xt: string) => (
    <Plot
      data={[
        { name: "voxels", x: u, y, mode: "markers", type: "scatter", marker: { color: "#0f766e", size: 6 } },
        {
          name: `Gaussian fit (FWHM ${fwhm?.toFixed(3) ?? "—"} µm)`,
          x: u,
          y: gauss(u, fwhm),
          mode: "lines",
          type: "scatter",
          line: { color: "#b42318", width: 2 },
        },
      ]}
      layout={{
        ...baseLayout,
        height: 260,
        title: { text: title, font: { size: 12 } },
        xaxis: axis(xt),
        yaxis: axis("counts"),
      }}
      config={plotConfig}
      useResizeHandler
      style={{ width: "100%" }}
    />
  );
  return (
    <div className="space-y-3" data-testid="bead-viewer">
      <PsfSections volume={volume} title={`Bead ${beadId}: sections through its centre`} />
      <div className="grid gap-2 md:grid-cols-2">
        {profile(
          "x profile through the centre",
          xs,
          xs.map((_, i) => at(cz, cy, i)),
          data.fit.fwhmXUm,
          "x (µm)",
        )}
        {profile(
          "z profile through the centre",
          zs,
          zs.map((_, i) => at(i, cy, cx)),
          data.fit.fwhmZUm,
          "z, into the sample (µm)",
        )}
      </div>
      <p className="text-xs text-ink-soft">
        Fitted curves: Gaussian + offset with the bead&apos;s fitted FWHM, amplitude and background (the
        headline widths). Under spherical aberration the axial profile is not Gaussian; compare with the
        half-maximum width in the table.
      </p>
    </div>
  );
}
