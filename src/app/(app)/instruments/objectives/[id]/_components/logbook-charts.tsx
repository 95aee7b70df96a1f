"use client";
import { TrendChart } from "@/components/charts/trend-chart";
import type { ObjectiveTrendView } from "./types";

export function LogbookCharts({
  trend,
  limits,
}: {
  trend: ObjectiveTrendView;
  limits: { lateral: number; axial: number };
}) {
  const points = (k: "lateralRatio" | "axialRatio") =>
    trend.points.map((p) => ({
      acquiredAt: p.acquiredAt,
      value: p[k],
      measurementId: p.measurementId,
      purpose: p.purpose,
      epoch: p.epoch,
    }));
  return (
    <div className="grid gap-4 lg:grid-cols-2" data-testid="logbook-charts">
      <TrendChart
        title="Lateral FWHM / theory"
        points={points("lateralRatio")}
        currentEpoch={trend.currentEpoch}
        specLimit={limits.lateral}
        chart={trend.charts.lateral}
        events={trend.events}
      />
      <TrendChart
        title="Axial FWHM / theory"
        points={points("axialRatio")}
        currentEpoch={trend.currentEpoch}
        specLimit={limits.axial}
        chart={trend.charts.axial}
        events={trend.events}
      />
    </div>
  );
}
