import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";
import { BASE_URL, demoCredentials, openBrowser, screenshot, type Session } from "./browser";
import { SignInPage } from "./pages/sign-in-page";

let dir: string;
let qcFile: string;
let s: Session;

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), "bb-e2e-"));
  const demo = makeDemoBeadStack({
    na: 1.4,
    immersionRi: 1.518,
    sampleRi: 1.518,
    emissionWavelengthNm: 520,
    seed: 21,
  });
  qcFile = path.join(dir, "qc-63x-oil-beads.tif");
  writeFileSync(qcFile, demo.tiff);
  s = await openBrowser();
});
afterAll(async () => {
  await s?.close();
  rmSync(dir, { recursive: true, force: true });
});

describe("staff runs the monthly check of an objective", () => {
  it("uploads a stack with a visible progress bar, fills the form, and reads the verdict and charts", async () => {
    const { page } = s;
    const signIn = new SignInPage(page);
    await signIn.goto();
    const c = demoCredentials("staff");
    await signIn.signIn(c.email, c.password);
    await page.waitForURL(`${BASE_URL}/dashboard`);
    await page.click("[data-testid=new-measurement]");
    await page.waitForURL(`${BASE_URL}/measurements/new`);

    await page.setInputFiles("[data-testid=stack-file]", qcFile);
    await page.waitForSelector("[data-testid=upload-progress]", { timeout: 10_000 });
    await page.waitForSelector("[data-testid=stack-facts]", { timeout: 60_000 });
    const facts = await page.getByTestId("stack-facts").textContent();
    expect(facts).toContain("128 × 128 × 48");
    expect(facts).toContain("0.0650 × 0.0650 × 0.1500");

    const options = await page.locator("#m-objective option").allTextContents();
    await page.selectOption("#m-objective", {
      index: options.findIndex((o) => o.includes("63× / 1.40 oil")),
    });
    await page.selectOption("#m-modality", "widefield");
    await page.fill("#m-ex", "");
    await screenshot(page, "staff-measurement-form");
    await page.click("[data-testid=start-measurement]");
    await page.waitForURL(/\/measurements\/[0-9a-f-]{36}$/, { timeout: 20_000 });
    await page.waitForSelector("[data-testid=verdict-card]", { timeout: 120_000 });
    const verdict = await page.getByTestId("verdict-card").textContent();
    expect(verdict).toMatch(/Verdict · (pass|check)/);
    await page.waitForSelector(".main-svg", { timeout: 30_000 });
    expect(await page.locator("[data-testid=bead-table] tbody tr").count()).toBeGreaterThanOrEqual(6);
    await page.waitForTimeout(1500); // let Plotly finish drawing before the screenshot
    await screenshot(page, "staff-measurement-result");
    expect(s.problems).toEqual([]);
  });

  it("lists the uploaded stack with a projection thumbnail and opens its page", async () => {
    const { page } = s; // still signed in as staff from the journey above
    await page.goto(`${BASE_URL}/stacks`);
    await page.waitForSelector("[data-testid=stack-table] tbody tr");
    expect(await page.locator("[data-testid=stack-table] tbody tr").count()).toBeGreaterThanOrEqual(1);
    const thumb = page.locator("[data-testid=stack-thumbnail]").first();
    await thumb.scrollIntoViewIfNeeded();
    await page.waitForFunction(
      () => {
        const img = document.querySelector<HTMLImageElement>("[data-testid=stack-thumbnail]");
        return !!img && img.complete && img.naturalWidth > 0;
      },
      undefined,
      { timeout: 30_000 },
    );
    expect(await thumb.evaluate((img: HTMLImageElement) => img.naturalWidth)).toBeGreaterThan(0);
    await screenshot(page, "stacks-list");

    await page.locator("[data-testid=stack-table] tbody tr a").first().click();
    await page.waitForURL(/\/stacks\/[0-9a-f-]{36}$/);
    await page.waitForSelector("[data-testid=stack-facts]");
    await page.waitForFunction(
      () => {
        const img = document.querySelector<HTMLImageElement>("[data-testid=stack-projection]");
        return !!img && img.complete && img.naturalWidth > 0;
      },
      undefined,
      { timeout: 30_000 },
    );
    await expect(page.getByTestId("stack-metadata").textContent()).resolves.toContain("z-step (µm)");
    await screenshot(page, "stack-detail");
    expect(s.problems).toEqual([]);
  });
});
