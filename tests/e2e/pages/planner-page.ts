import type { Page } from "playwright-core";
import { BASE_URL } from "../browser";

/** One Plotly trace as the planner draws it. */
export interface PlotTrace {
  name: string;
  x: number[];
  y: number[];
}

export type PlannerChart = "axial" | "lateral" | "peak" | "focal-shift";

export class PlannerPage {
  constructor(private readonly page: Page) {}

  async goto(query: Record<string, string> = {}) {
    const q = new URLSearchParams(query).toString();
    await this.page.goto(`${BASE_URL}/planner${q ? `?${q}` : ""}`);
    await this.page.getByTestId("planner-inputs").waitFor();
  }

  async chooseMedium(id: string) {
    await this.page.selectOption("#p-medium", id);
  }

  async setDeepestPlane(depthUm: number) {
    await this.page.fill("#p-depth", String(depthUm));
  }

  /**
   * Wait until the ranking and all four charts show a result computed for `depthUm`
   * (the focal-shift chart's x axis is the nominal travel, so its last x is the deepest plane).
   */
  async waitForResult(depthUm: number, objectiveCount: number) {
    await this.page
      .getByTestId("planner-ranking")
      .filter({ hasText: `to ${depthUm} µm` })
      .waitFor({ timeout: 30_000 });
    await this.page.waitForFunction(
      ({ depth, count }) => {
        const charts = ["axial", "lateral", "peak", "focal-shift"].map(
          (c) =>
            document.querySelector(`[data-testid=planner-chart-${c}] .js-plotly-plot`) as
              (Element & { data?: Array<{ x: number[] }> }) | null,
        );
        if (charts.some((c) => !c?.data || c.data.length !== count)) return false;
        const focal = charts[3]!.data!;
        return focal.every((t) => t.x[t.x.length - 1] === depth);
      },
      { depth: depthUm, count: objectiveCount },
      { timeout: 30_000 },
    );
  }

  /** Objective ids in ranking order. */
  async rankingIds(): Promise<string[]> {
    return this.page
      .locator("[data-testid=planner-rank-item]")
      .evaluateAll((els) => els.map((e) => e.getAttribute("data-objective-id") ?? ""));
  }

  /** The traces of one chart, read from the Plotly element in the DOM. */
  async traces(chart: PlannerChart): Promise<PlotTrace[]> {
    return this.page.evaluate((c) => {
      const el = document.querySelector(`[data-testid=planner-chart-${c}] .js-plotly-plot`) as
        (Element & { data?: Array<{ name: string; x: number[]; y: number[] }> }) | null;
      return (el?.data ?? []).map((t) => ({ name: t.name, x: Array.from(t.x), y: Array.from(t.y) }));
    }, chart);
  }

  /** All four charts' traces (for comparing two renderings of the same plan). */
  async allTraces(): Promise<Record<PlannerChart, PlotTrace[]>> {
    return {
      axial: await this.traces("axial"),
      lateral: await this.traces("lateral"),
      peak: await this.traces("peak"),
      "focal-shift": await this.traces("focal-shift"),
    };
  }
}
