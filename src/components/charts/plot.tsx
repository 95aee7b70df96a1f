"use client";
// The one Plotly entry: client-only, loaded on demand, with the house look.
import dynamic from "next/dynamic";
import type { ComponentType } from "react";
import type { PlotParams } from "react-plotly.js";

export const Plot = dynamic(
  async () => {
    const [{ default: createPlotComponent }, Plotly] = await Promise.all([
      import("react-plotly.js/factory"),
      import("plotly.js-dist-min"),
    ]);
    return createPlotComponent(Plotly.default ?? Plotly) as ComponentType<PlotParams>;
  },
  { ssr: false, loading: () => <div className="h-72 animate-pulse rounded bg-paper" /> },
);

/**
 * User text for Plotly (trace names, hover text): Plotly reads these as its own small HTML
 * (<b>, <br>, <a href>…) and silently drops other tags, so "<script>x</script>" would show as "x".
 * Escaped, it reads exactly as written: Plotly turns &lt; &gt; &amp; back into characters.
 */
export function plotText(text: string): string {
  return text.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;");
}

export const chartFont = { family: "Inter, system-ui, sans-serif", size: 12, color: "#1f2a37" };

export const baseLayout = {
  font: chartFont,
  paper_bgcolor: "#ffffff",
  plot_bgcolor: "#ffffff",
  margin: { l: 60, r: 20, t: 30, b: 50 },
  legend: { orientation: "h" as const, y: -0.25, font: { size: 11 } },
  hovermode: "closest" as const,
};

export const axis = (title: string) => ({
  title: { text: title },
  gridcolor: "#eef1ee",
  zerolinecolor: "#d5dbd7",
  linecolor: "#c8d0cb",
  tickfont: { family: "Roboto Mono, monospace", size: 11 },
});

export const plotConfig = {
  displaylogo: false,
  responsive: true,
  modeBarButtonsToRemove: ["lasso2d", "select2d"],
} as const;

/** A horizontal reference line from x0 to x1 (a limit or a centre line), or null without a value. */
export function flatLine(
  y: number | null,
  name: string,
  style: { color: string; dash: string },
  x0: string | undefined,
  x1: string | undefined,
) {
  if (y == null || !x0 || !x1) return null;
  return {
    name,
    x: [x0, x1],
    y: [y, y],
    mode: "lines",
    type: "scatter",
    line: { color: style.color, dash: style.dash, width: 1.5 },
    hoverinfo: "name+y",
  };
}
