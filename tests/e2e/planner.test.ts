/**
 * The medium planner as a researcher uses it: a water and an oil lens for an aqueous
 * sample to 20 µm. The ranking must put the water lens first, the link must reproduce
 * the same result in a fresh page, and the plotted widths must be the model's own.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/server/db/client";
import { getMedium, plannerRows, refractiveIndex, theoreticalFwhm } from "@/lib/optics";
import { BASE_URL, openBrowser, screenshot, type Session } from "./browser";
import { demoObjective } from "./demo-ids";
import { PlannerPage } from "./pages/planner-page";
import { signInAs } from "./pages/sign-in-page";

const DEPTH_UM = 20;
const EMISSION_NM = 520;
const TEMPERATURE_C = 23;
const MODALITY = "widefield" as const; // the planner's default

let s: Session;
let water: Awaited<ReturnType<typeof demoObjective>>;
let oil: Awaited<ReturnType<typeof demoObjective>>;

beforeAll(async () => {
  water = await demoObjective("60× / 1.20 water");
  oil = await demoObjective("63× / 1.40 oil");
  s = await openBrowser();
});
afterAll(async () => {
  await s?.close();
  await closeDb();
});

describe("medium planner", () => {
  it("ranks the water lens first for an aqueous sample, reproducibly from its link, with the model's widths", async () => {
    const { page } = s;
    await signInAs(page, "researcher");
    const planner = new PlannerPage(page);
    // Start from a plan for another medium and change it on the page: every input goes to the URL.
    await planner.goto({ objectives: `${oil.id},${water.id}`, medium: "glycerol" });
    await planner.chooseMedium("water");
    await planner.setDeepestPlane(DEPTH_UM);
    await planner.waitForResult(DEPTH_UM, 2);

    const url = page.url();
    expect(new URL(url).searchParams.get("depth")).toBe(String(DEPTH_UM));
    expect(new URL(url).searchParams.get("medium")).toBe("water");
    // A water-immersion lens has no RI mismatch in an aqueous sample, an oil lens a large one
    // (1.518 → 1.33), so the water lens keeps its axial width deeper.
    // Source: Gibson & Lanni 1991 (J Opt Soc Am A 8:1601); METHODS.md planner check values.
    const ranking = await planner.rankingIds();
    expect(ranking).toEqual([water.id, oil.id]);
    const traces = await planner.allTraces();
    await page.waitForTimeout(800); // let Plotly finish drawing before the screenshot
    await screenshot(page, "planner");

    // The same link in a fresh page gives the same ranking and the same plotted values.
    const fresh = await s.context.newPage();
    try {
      await fresh.goto(url);
      const again = new PlannerPage(fresh);
      await again.waitForResult(DEPTH_UM, 2);
      expect(await again.rankingIds()).toEqual(ranking);
      expect(await again.allTraces()).toEqual(traces);
    } finally {
      await fresh.close();
    }

    // The page's axial FWHM at 20 µm equals the model's for the same inputs, scaled by the
    // modality's theoretical FWHM over the widefield one (1 for widefield), as the planner
    // service does. Source: Gibson & Lanni 1991 scalar model via lib/optics plannerRows,
    // whose values are checked against METHODS.md check values in tests/unit.
    const medium = getMedium("water")!;
    const sampleRi = refractiveIndex(medium, { wavelengthNm: EMISSION_NM, temperatureC: TEMPERATURE_C });
    const depthsUm = Array.from({ length: 21 }, (_, i) => (DEPTH_UM * i) / 20);
    for (const o of [water, oil]) {
      const optics = { na: o.na, immersionRi: o.designImmersionRi, emissionWavelengthNm: EMISSION_NM };
      const scale =
        theoreticalFwhm({ modality: MODALITY, ...optics }).axialNm /
        theoreticalFwhm({ modality: "widefield", ...optics }).axialNm;
      const rows = plannerRows({
        objective: {
          id: o.id,
          name: o.name,
          na: o.na,
          immersionRi: o.designImmersionRi,
          coverslipThicknessDesignUm: o.designCoverslipUm,
        },
        sampleRi,
        wavelengthNm: EMISSION_NM,
        depthsUm,
      });
      const trace = traces.axial.find((t) => t.name === o.name)!;
      expect(trace.y).toHaveLength(depthsUm.length);
      expect(trace.y[trace.y.length - 1]).toBeCloseTo(rows[rows.length - 1]!.axialFwhmUm * scale, 9);
      expect(trace.x[trace.x.length - 1]).toBeCloseTo(rows[rows.length - 1]!.actualDepthUm, 9);
    }
    // The oil lens broadens far more at 20 µm in water than the water lens does.
    const last = (name: string) => traces.axial.find((t) => t.name === name)!.y.at(-1)!;
    const first = (name: string) => traces.axial.find((t) => t.name === name)!.y[0]!;
    expect(last(oil.name) / first(oil.name)).toBeGreaterThan(last(water.name) / first(water.name));
    expect(s.problems).toEqual([]);
  });

  it("links to a one-page summary with the same ranking, the cautions expanded and a print button", async () => {
    const { page } = s; // still signed in as the researcher
    const planner = new PlannerPage(page);
    await planner.goto({ objectives: `${oil.id},${water.id}`, medium: "water", depth: String(DEPTH_UM) });
    await planner.waitForResult(DEPTH_UM, 2);
    const ranking = await planner.rankingIds();
    await page.click("[data-testid=planner-print-link]");
    await page.waitForURL(/\/planner\/print\?/);
    const items = await page.locator("[data-testid=print-rank-item]").allTextContents();
    expect(items).toHaveLength(2);
    expect(items[0]).toContain(ranking[0] === water.id ? water.name : oil.name);
    // five depths per objective
    expect(await page.locator("[data-testid=print-table] tbody tr").count()).toBe(10);
    expect(await page.locator("[data-testid=caution-note]").getAttribute("open")).not.toBeNull();
    await page.emulateMedia({ media: "print" });
    expect(await page.getByTestId("planner-print-button").isVisible()).toBe(false);
    await screenshot(page, "planner-print");
    await page.emulateMedia({ media: "screen" });
    expect(await page.getByTestId("planner-print-button").isVisible()).toBe(true);
    expect(s.problems).toEqual([]);
  });

  it("says what is wrong with an unusable summary link instead of failing", async () => {
    const { page } = s; // still signed in as the researcher
    const res = await page.goto(`${BASE_URL}/planner/print?objectives=${water.id}&medium=custom&ri=7`);
    expect(res?.status()).toBe(200);
    await expect(page.locator("[data-testid=planner-print] [role=alert]").textContent()).resolves.toContain(
      "not usable",
    );
    expect(s.problems).toEqual([]);
  });
});
