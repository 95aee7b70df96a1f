"use client";
import type { MeasurementSummary, PublicBead } from "@/hooks/use-measurement";
import { Plot, axis, baseLayout, plotConfig } from "./plot";

const COLORS = {
  lateral: "#0f766e",
  axial: "#7c3aed",
  theory: "#6b7280",
  predicted: "#b7791f",
  fitted: "#b42318",
};

/**
 * Widths against actual depth: every included bead, per-depth medians with their
 * interquartile range, the diffraction-limited expectation, and the RI-mismatch
 * model for the declared medium and for the fitted effective RI. Widths are the
 * 1D Gaussian-fit FWHMs (the headline figure).
 */
export function DepthProfileChart({ summary, beads }: { summary: MeasurementSummary; beads: PublicBead[] }) {
  const inc = beads.filter((b) => b.included && b.depth_um != null);
  const depthMax = Math.max(1, ...inc.map((b) => b.depth_um!), ...summary.prediction.map((p) => p.depthUm));
  const lat = (b: PublicBead) =>
    b.fwhm_x_um != null && b.fwhm_y_um != null ? (b.fwhm_x_um + b.fwhm_y_um) / 2 : null;
  const prof = summary.depthProfile;
  const med = (a: { medianUm: number | null }, b: { medianUm: number | null }) =>
    a.medianUm != null && b.medianUm != null ? (a.medianUm + b.medianUm) / 2 : null;
  const data: unknown[] = [
    {
      name: "lateral, each bead",
      x: inc.map((b) => b.depth_um),
      y: inc.map(lat),
      mode: "markers",
      type: "scatter",
      marker: { color: COLORS.lateral, size: 6, opacity: 0.45, symbol: "circle" },
    },
    {
      name: "axial, each bead",
      x: inc.map((b) => b.depth_um),
      y: inc.map((b) => b.fwhm_z_um),
      mode: "markers",
      type: "scatter",
      marker: { color: COLORS.axial, size: 6, opacity: 0.45, symbol: "diamond" },
    },
    {
      name: "lateral, median per depth (IQR)",
      x: prof.map((p) => p.depthMedianUm),
      y: prof.map((p) => med(p.fwhmX, p.fwhmY)),
      error_y: {
        type: "data",
        symmetric: false,
        array: prof.map((p) =>
          Math.max(0, ((p.fwhmX.q3Um ?? 0) + (p.fwhmY.q3Um ?? 0)) / 2 - (med(p.fwhmX, p.fwhmY) ?? 0)),
        ),
        arrayminus: prof.map((p) =>
          Math.max(0, (med(p.fwhmX, p.fwhmY) ?? 0) - ((p.fwhmX.q1Um ?? 0) + (p.fwhmY.q1Um ?? 0)) / 2),
        ),
        color: COLORS.lateral,
      },
      mode: "lines+markers",
      type: "scatter",
      line: { color: COLORS.lateral, width: 2 },
      marker: { size: 9, symbol: "circle" },
    },
    {
      name: "axial, median per depth (IQR)",
      x: prof.map((p) => p.depthMedianUm),
      y: prof.map((p) => p.fwhmZ.medianUm),
      error_y: {
        type: "data",
        symmetric: false,
        array: prof.map((p) => Math.max(0, (p.fwhmZ.q3Um ?? 0) - (p.fwhmZ.medianUm ?? 0))),
        arrayminus: prof.map((p) => Math.max(0, (p.fwhmZ.medianUm ?? 0) - (p.fwhmZ.q1Um ?? 0))),
        color: COLORS.axial,
      },
      mode: "lines+markers",
      type: "scatter",
      line: { color: COLORS.axial, width: 2 },
      marker: { size: 9, symbol: "diamond" },
    },
    {
      name: "diffraction limit (lateral, axial)",
      x: [0, depthMax, null, 0, depthMax],
      y: [
        summary.theory.lateralNm / 1000,
        summary.theory.lateralNm / 1000,
        null,
        summary.theory.axialNm / 1000,
        summary.theory.axialNm / 1000,
      ],
      mode: "lines",
      type: "scatter",
      line: { color: COLORS.theory, dash: "dot", width: 1.5 },
    },
    {
      name: `model, declared medium (n = ${summary.sampleRi.toFixed(3)})`,
      x: summary.prediction.map((p) => p.depthUm),
      y: summary.prediction.map((p) => p.axialFwhmUm),
      mode: "lines",
      type: "scatter",
      line: { color: COLORS.predicted, dash: "dash", width: 2 },
    },
  ];
  if (summary.effectiveRi.sampleRi != null) {
    const fit = summary.effectiveRi;
    data.push({
      name: `model, fitted effective RI (n = ${fit.sampleRi.toFixed(3)})`,
      x: fit.rows.map((r) => r.actualDepthUm),
      y: fit.rows.map((r) => r.predictedAxialFwhmUm / fit.widefieldScale),
      mode: "lines+markers",
      type: "scatter",
      line: { color: COLORS.fitted, width: 1.5 },
      marker: { size: 5, symbol: "x" },
    });
  }
  return (
    <Plot
      data={data}
      layout={{
        ...baseLayout,
        height: 420,
        xaxis: axis("actual depth below the coverslip (µm)"),
        yaxis: { ...axis("FWHM (µm), 1D Gaussian fit"), rangemode: "tozero" },
      }}
      config={plotConfig}
      useResizeHandler
      style={{ width: "100%" }}
    />
  );
}

export function IntensityChart({ summary, beads }: { summary: MeasurementSummary; beads: PublicBead[] }) {
  const inc = beads.filter((b) => b.included && b.depth_um != null && b.amplitude != null);
  const shallow = inc
    .filter((b) => b.depth_um! <= Math.min(...inc.map((x) => x.depth_um!)) + 2)
    .map((b) => b.amplitude!);
  const ref = shallow.length ? shallow.sort((a, b) => a - b)[shallow.length >> 1]! : 1;
  return (
    <Plot
      data={[
        {
          name: "peak above background, relative to the shallowest beads",
          x: inc.map((b) => b.depth_um),
          y: inc.map((b) => b.amplitude! / ref),
          mode: "markers",
          type: "scatter",
          marker: { color: "#0f766e", size: 6, opacity: 0.6 },
        },
        {
          name: "model: peak relative to the surface",
          x: summary.prediction.map((p) => p.depthUm),
          y: summary.prediction.map((p) => p.peakRelative / (summary.prediction[0]?.peakRelative || 1)),
          mode: "lines",
          type: "scatter",
          line: { color: "#b7791f", dash: "dash", width: 2 },
        },
      ]}
      layout={{
        ...baseLayout,
        height: 300,
        // A short chart: the legend's offset is a fraction of the plot height, so it must
        // go further down to clear the x-axis title.
        legend: { ...baseLayout.legend, y: -0.42 },
        xaxis: axis("actual depth below the coverslip (µm)"),
        yaxis: { ...axis("relative peak intensity"), rangemode: "tozero" },
      }}
      config={plotConfig}
      useResizeHandler
      style={{ width: "100%" }}
    />
  );
}
