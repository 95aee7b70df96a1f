"use client";
import { Plot, axis, baseLayout, flatLine, plotConfig } from "./plot";

export interface BaselineBandChartProps {
  title: string;
  yTitle: string;
  points: Array<{ acquiredAt: string; value: number | null; measurementId: string; epoch: number }>;
  currentEpoch: number;
  band: {
    worse: "up" | "down";
    centre: number | null;
    lower3: number | null;
    upper3: number | null;
    provisional: boolean;
    beyond: string[];
  };
  /** Decimals of the hover values. */
  digits?: number;
}

/**
 * A figure judged only against the lens's own baseline: its checks, the current epoch's
 * baseline centre and the 3σ line on the worse side; checks beyond that line are drawn
 * as open red diamonds. Advisory only: these figures have no acceptance limit.
 */
export function BaselineBandChart({
  title,
  yTitle,
  points,
  currentEpoch,
  band,
  digits = 3,
}: BaselineBandChartProps) {
  const valid = points.filter((p) => p.value != null);
  const epochPts = valid.filter((p) => p.epoch === currentEpoch);
  const x0 = epochPts[0]?.acquiredAt;
  const x1 = valid[valid.length - 1]?.acquiredAt;
  const beyond = new Set(band.beyond);
  const limit = band.worse === "up" ? band.upper3 : band.lower3;
  const line = (y: number | null, name: string, color: string, dash: string) =>
    flatLine(y, name, { color, dash }, x0, x1);
  const data = [
    {
      name: "checks",
      x: valid.map((p) => p.acquiredAt),
      y: valid.map((p) => p.value),
      mode: "lines+markers",
      type: "scatter",
      line: { color: "#94a3b8", width: 1 },
      marker: {
        size: valid.map((p) => (beyond.has(p.measurementId) ? 11 : 7)),
        symbol: valid.map((p) => (beyond.has(p.measurementId) ? "diamond-open" : "circle")),
        color: valid.map((p) => (beyond.has(p.measurementId) ? "#b42318" : "#0f766e")),
      },
      hovertemplate: `%{y:.${digits}f}<extra></extra>`,
    },
    line(band.centre, "baseline centre", "#0b5a54", "dot"),
    line(
      limit,
      band.worse === "up" ? "+3σ (beyond baseline)" : "−3σ (beyond baseline)",
      "#b42318",
      band.provisional ? "dash" : "solid",
    ),
  ].filter(Boolean) as unknown[];
  return (
    <Plot
      data={data}
      layout={{
        ...baseLayout,
        height: 280,
        title: { text: title, font: { size: 13 } },
        margin: { l: 55, r: 20, t: 40, b: 50 },
        xaxis: { ...axis("acquired"), type: "date" },
        yaxis: axis(yTitle),
        legend: { ...baseLayout.legend, y: -0.42 },
      }}
      config={plotConfig}
      useResizeHandler
      style={{ width: "100%" }}
    />
  );
}
