/**
 * The service engineer's journey: only the instrument of the current visit is visible,
 * the visit and its report open, and an objective of another instrument is "not found"
 * (DEVELOPERS.md "404, not 403, across facilities" — the same rule for an engineer's
 * instruments outside the visit).
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/server/db/client";
import { BASE_URL, openBrowser, screenshot, type Session } from "./browser";
import { demoEngineerVisitId, demoObjective } from "./demo-ids";
import { signInAs } from "./pages/sign-in-page";

let s: Session;
let visitId: string;
let foreignObjectiveId: string;

beforeAll(async () => {
  visitId = await demoEngineerVisitId();
  // The 63×/1.40 oil lens sits on the confocal, which is not part of the engineer's visit.
  foreignObjectiveId = (await demoObjective("63× / 1.40 oil")).id;
  s = await openBrowser();
});
afterAll(async () => {
  await s?.close();
  await closeDb();
});

describe("service engineer", () => {
  it("sees only the visit's instrument, opens the visit report, and cannot reach other lenses", async () => {
    const { page } = s;
    await signInAs(page, "engineer");

    await page.click("nav[aria-label=Main] a:has-text('Instruments')");
    await page.waitForURL(`${BASE_URL}/instruments`);
    const cards = await page.locator("[data-testid=instrument-card] h2").allTextContents();
    expect(cards).toEqual(["Spinning disk West (room 3.02)"]);
    await screenshot(page, "engineer-instruments");

    await page.click("nav[aria-label=Main] a:has-text('Service visits')");
    await page.waitForURL(`${BASE_URL}/service-visits`);
    await page.click(`a[href="/service-visits/${visitId}"]`);
    await page.waitForURL(`${BASE_URL}/service-visits/${visitId}`);
    const report = page.getByTestId("visit-report");
    await report.waitFor();
    expect(await report.textContent()).toContain("Spinning disk West (room 3.02)");
    await screenshot(page, "engineer-visit-report");
    expect(s.problems).toEqual([]);

    // An objective of another instrument: 404, with the app's not-found page, not a crash.
    const res = await page.goto(`${BASE_URL}/instruments/objectives/${foreignObjectiveId}`);
    expect(res?.status()).toBe(404);
    expect(await page.locator("h1").first().textContent()).toBe("Nothing here");
    await screenshot(page, "engineer-objective-404");
    // The only problems recorded are that expected 404 (and the browser's console line about it).
    const unexpected = s.problems.filter(
      (p) => !p.includes(foreignObjectiveId) && !p.includes("status of 404"),
    );
    expect(unexpected).toEqual([]);
  });
});
