"use client";
import { BaselineBandChart } from "@/components/charts/baseline-band-chart";
import { TrendChart } from "@/components/charts/trend-chart";
import type { ObjectiveTrendView } from "./types";

export function LogbookCharts({
  trend,
  limits,
}: {
  trend: ObjectiveTrendView;
  limits: { lateral: number; axial: number };
}) {
  const points = (k: "lateralRatio" | "axialRatio" | "lateralAsymmetry" | "planarityUm") =>
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
      <div className="lg:col-span-2" data-testid="shape-charts">
        <h3 className="text-sm font-semibold">Shape and field, against this lens&apos;s own baseline</h3>
        <p className="text-xs text-ink-soft">
          These figures have no universal limit: each lens is compared with the baseline block of its current
          epoch. A check beyond 3σ on the worse side is marked; it does not change the status. Planarity needs
          9 beads near the coverslip.
        </p>
      </div>
      <BaselineBandChart
        title="Lateral asymmetry (min/max FWHM, 1 = round)"
        yTitle="min/max lateral FWHM"
        points={points("lateralAsymmetry")}
        currentEpoch={trend.currentEpoch}
        band={trend.shape.lateralAsymmetry}
      />
      <BaselineBandChart
        title="Field planarity (best-focus peak–valley)"
        yTitle="peak–valley (µm)"
        points={points("planarityUm")}
        currentEpoch={trend.currentEpoch}
        band={trend.shape.planarityUm}
        digits={2}
      />
    </div>
  );
}
