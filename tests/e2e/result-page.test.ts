/**
 * On a finished measurement: open a bead in the viewer (sections read back from
 * the stored stack, fitted profile overlaid) and mark the check as a baseline.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq } from "drizzle-orm";
import { closeDb, getDb } from "@/server/db/client";
import { logbookEvents } from "@/server/db/schema";
import { finishedMeasurement, tokenFor } from "./api-client";
import { BASE_URL, demoCredentials, openBrowser, screenshot, type Session } from "./browser";
import { SignInPage } from "./pages/sign-in-page";

let s: Session;
beforeAll(async () => {
  s = await openBrowser();
});
afterAll(async () => {
  await s?.close();
  await closeDb();
});

describe("the result page", () => {
  it("shows a chosen bead and turns the check into a baseline", async () => {
    const done = await finishedMeasurement(await tokenFor("staff@larkspur.example"), 44);
    const m = { id: done.measurementId, objectiveId: done.objectiveId };
    const { page } = s;
    const signIn = new SignInPage(page);
    await signIn.goto();
    const c = demoCredentials("staff");
    await signIn.signIn(c.email, c.password);
    await page.waitForURL(`${BASE_URL}/dashboard`);
    await page.goto(`${BASE_URL}/measurements/${m!.id}`);
    await page.waitForSelector("[data-testid=bead-table] tbody tr");
    await page.locator("[data-testid=bead-table] tbody tr").first().click();
    await page.waitForSelector("[data-testid=bead-viewer] .main-svg", { timeout: 30_000 });
    await page.waitForTimeout(1000);
    await screenshot(page, "bead-viewer");
    await page.click("[data-testid=mark-baseline]");
    await page.waitForFunction(
      () => document.querySelector("h1")?.textContent?.includes("baseline measurement"),
      null,
      { timeout: 10_000 },
    );
    const events = await getDb()
      .select()
      .from(logbookEvents)
      .where(and(eq(logbookEvents.objectiveId, m!.objectiveId), eq(logbookEvents.kind, "baseline_start")));
    expect(events.length).toBeGreaterThanOrEqual(1);
    expect(s.problems).toEqual([]);
  });
});
