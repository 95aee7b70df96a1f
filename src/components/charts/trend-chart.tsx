"use client";
import { Plot, axis, baseLayout, flatLine, plotConfig, plotText } from "./plot";

export interface TrendChartProps {
  title: string;
  points: Array<{
    acquiredAt: string;
    value: number | null;
    measurementId: string;
    purpose: string;
    epoch: number;
  }>;
  currentEpoch: number;
  /** The acceptance limit (spec), drawn as a solid line. */
  specLimit: number;
  chart: {
    centre: number | null;
    upper3: number | null;
    upper2: number | null;
    lower3: number | null;
    provisional: boolean;
    ewma: Array<{ value: number; upper: number }>;
  };
  events: Array<{ kind: string; occurredAt: string; note: string | null }>;
}

const EVENT_LABEL: Record<string, string> = {
  cleaned: "cleaned",
  collar_set: "collar set",
  immersion_changed: "immersion changed",
  dropped: "dropped",
  new_bead_slide: "new bead slide",
  installed: "installed",
  repaired: "repaired",
  service: "service",
  baseline_start: "new baseline",
  checklist_step: "checklist",
  note: "note",
};

/**
 * A ratio (measured/theory) over time: points coloured by purpose, the spec limit,
 * the current epoch's individuals-chart centre and ±2σ/3σ limits, the EWMA, and
 * event markers. Limits are dashed while provisional (few points).
 */
export function TrendChart({ title, points, currentEpoch, specLimit, chart, events }: TrendChartProps) {
  const valid = points.filter((p) => p.value != null);
  const epochPts = valid.filter((p) => p.epoch === currentEpoch);
  const x0 = epochPts[0]?.acquiredAt ?? valid[0]?.acquiredAt;
  const x1 = valid[valid.length - 1]?.acquiredAt;
  const limitLine = (y: number | null, name: string, color: string, dash: string) =>
    flatLine(y, name, { color, dash }, x0, x1);
  const dashed = chart.provisional ? "dash" : "solid";
  const data = [
    {
      name: "checks",
      x: valid.map((p) => p.acquiredAt),
      y: valid.map((p) => p.value),
      text: valid.map((p) => `${p.purpose} · epoch ${p.epoch}`),
      mode: "lines+markers",
      type: "scatter",
      line: { color: "#94a3b8", width: 1 },
      marker: {
        size: valid.map((p) => (p.purpose === "baseline" || p.purpose === "post-service" ? 11 : 8)),
        symbol: valid.map((p) =>
          p.purpose === "baseline"
            ? "star"
            : p.purpose === "post-service"
              ? "triangle-up"
              : p.purpose === "pre-service"
                ? "triangle-down"
                : "circle",
        ),
        color: valid.map((p) => (p.value! >= specLimit ? "#b42318" : "#0f766e")),
      },
    },
    {
      name: "EWMA (λ 0.2)",
      x: epochPts.map((p) => p.acquiredAt),
      y: chart.ewma.map((e) => e.value),
      mode: "lines",
      type: "scatter",
      line: { color: "#7c3aed", width: 1.5, shape: "spline" },
    },
    limitLine(specLimit, `acceptance limit ${specLimit.toFixed(2)}`, "#b42318", "solid"),
    limitLine(chart.centre, "baseline centre", "#0b5a54", "dot"),
    limitLine(chart.upper2, "+2σ (warning)", "#b7791f", dashed),
    limitLine(chart.upper3, "+3σ (action)", "#b42318", dashed),
  ].filter(Boolean) as unknown[];
  const shapes = events.map((e) => ({
    type: "line",
    x0: e.occurredAt,
    x1: e.occurredAt,
    yref: "paper",
    y0: 0,
    y1: 1,
    line: {
      color:
        e.kind === "baseline_start" || e.kind === "service" || e.kind === "repaired" ? "#0f766e" : "#c8d0cb",
      width: 1,
      dash: "dot",
    },
  }));
  const annotations = events.map((e) => ({
    x: e.occurredAt,
    yref: "paper",
    y: 1.02,
    text: EVENT_LABEL[e.kind] ?? e.kind,
    showarrow: false,
    font: { size: 10, color: "#4b5a6b" },
    textangle: -30,
    hovertext: e.note ? plotText(e.note) : undefined,
  }));
  return (
    <Plot
      data={data}
      layout={{
        ...baseLayout,
        height: 340,
        title: { text: title, font: { size: 13 } },
        margin: { l: 55, r: 20, t: 60, b: 50 },
        xaxis: { ...axis("acquired"), type: "date" },
        yaxis: axis("measured / theoretical FWHM"),
        legend: { ...baseLayout.legend, y: -0.35 },
        shapes,
        annotations,
      }}
      config={plotConfig}
      useResizeHandler
      style={{ width: "100%" }}
    />
  );
}
