/**
 * A researcher's journey: plan an oil lens against a medium of RI 1.38, follow the
 * planner's link to a prefilled sample measurement, upload beads embedded in that
 * medium (invented, rendered with the Gibson–Lanni model), and read the verdict, the
 * effective sample RI the beads reveal and the depth profile.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/server/db/client";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";
import { BASE_URL, openBrowser, screenshot, type Session } from "./browser";
import { demoObjective } from "./demo-ids";
import { PlannerPage } from "./pages/planner-page";
import { signInAs } from "./pages/sign-in-page";

const SAMPLE_RI = 1.38;
let dir: string;
let file: string;
let s: Session;
let oil: Awaited<ReturnType<typeof demoObjective>>;
let water: Awaited<ReturnType<typeof demoObjective>>;

beforeAll(async () => {
  oil = await demoObjective("63× / 1.40 oil");
  water = await demoObjective("60× / 1.20 water");
  dir = mkdtempSync(path.join(tmpdir(), "bb-researcher-"));
  // Invented data: an oil 1.40 lens imaging 24 beads in a medium of RI 1.38, 0–16 µm deep.
  // A fresh seed per run keeps the bytes new (identical bytes would reuse the stored stack).
  const demo = makeDemoBeadStack({
    na: 1.4,
    immersionRi: 1.518,
    sampleRi: SAMPLE_RI,
    emissionWavelengthNm: 520,
    shape: [120, 128, 128],
    voxelSizeUm: { x: 0.065, y: 0.065, z: 0.2 },
    beadCount: 24,
    depthRangeUm: [0, 16],
    coverslipSlice: 4,
    seed: 1000 + (Date.now() % 100_000),
  });
  file = path.join(dir, "beads-in-my-medium.tif");
  writeFileSync(file, demo.tiff);
  s = await openBrowser();
});
afterAll(async () => {
  await s?.close();
  rmSync(dir, { recursive: true, force: true });
  await closeDb();
});

describe("researcher checks their mounting medium", () => {
  it("plans, follows the planner to a prefilled sample measurement, and reads the effective RI", async () => {
    const { page } = s;
    await signInAs(page, "researcher");

    const planner = new PlannerPage(page);
    await planner.goto({
      objectives: `${oil.id},${water.id}`,
      medium: "custom",
      ri: String(SAMPLE_RI),
      depth: "16",
    });
    await planner.waitForResult(16, 2);
    await screenshot(page, "researcher-planner");

    await page.click("[data-testid=planner-to-measurement]");
    await page.waitForURL(/\/measurements\/new\?/);
    const q = new URL(page.url()).searchParams;
    expect(q.get("purpose")).toBe("sample");
    expect(q.get("ri")).toBe(String(SAMPLE_RI));
    expect(q.get("em")).toBe("520");

    await page.setInputFiles("[data-testid=stack-file]", file);
    await page.waitForSelector("[data-testid=stack-facts]", { timeout: 60_000 });
    expect(await page.getByTestId("stack-facts").textContent()).toContain("128 × 128 × 120");

    // The form carries the planner's choices; the researcher measures with the oil lens.
    expect(await page.inputValue("#m-purpose")).toBe("sample");
    expect(await page.inputValue("#m-em")).toBe("520");
    await page.selectOption("#m-objective", oil.id);
    if ((await page.inputValue("#m-medium")) !== "custom") await page.selectOption("#m-medium", "custom");
    if (Number(await page.inputValue("#m-ri")) !== SAMPLE_RI) await page.fill("#m-ri", String(SAMPLE_RI));
    await page.selectOption("#m-modality", "widefield"); // the invented stack is a widefield rendering
    await page.fill("#m-ex", "");
    await page.fill("#m-cs", "4");
    await screenshot(page, "researcher-measurement-form");
    await page.click("[data-testid=start-measurement]");
    await page.waitForURL(/\/measurements\/[0-9a-f-]{36}$/, { timeout: 20_000 });

    await page.waitForSelector("[data-testid=verdict-card]", { timeout: 170_000 });
    const verdict = (await page.getByTestId("verdict-card").textContent()) ?? "";
    expect(verdict).toMatch(/Verdict · \w+/);
    const ri = await page
      .getByTestId("verdict-card")
      .locator("div", { has: page.locator(".label", { hasText: "Effective sample RI" }) })
      .last()
      .locator(".font-mono")
      .textContent();
    // The beads were rendered at n = 1.38; the index fit should find it to within ±0.03 —
    // about the spread between common aqueous mounting media (common practice tolerance).
    expect(Number(ri)).toBeGreaterThan(SAMPLE_RI - 0.03);
    expect(Number(ri)).toBeLessThan(SAMPLE_RI + 0.03);

    // The depth chart draws measured beads and the model against depth.
    const depthCard = page.locator("section", { has: page.locator("h2", { hasText: "Depth profile" }) });
    await depthCard.locator(".js-plotly-plot").waitFor({ timeout: 30_000 });
    const traces = await depthCard
      .locator(".js-plotly-plot")
      .first()
      .evaluate((el) => ((el as unknown as { data?: unknown[] }).data ?? []).length);
    expect(traces).toBeGreaterThanOrEqual(2);
    await page.waitForSelector("[data-testid=bead-table] tbody tr", { timeout: 30_000 });
    expect(await page.locator("[data-testid=bead-table] tbody tr").count()).toBeGreaterThanOrEqual(6);
    await page.waitForTimeout(1500); // let Plotly finish drawing before the screenshot
    await screenshot(page, "researcher-result");
    expect(s.problems).toEqual([]);
    expect(page.url().startsWith(BASE_URL)).toBe(true);
  }, 240_000); // upload and analysis of a 120-plane stack
});
