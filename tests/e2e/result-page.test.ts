/**
 * On a finished measurement: open a bead in the viewer (sections read back from
 * the stored stack, fitted profile overlaid) and mark the check as a baseline.
 * Runs after api.test.ts, which leaves a finished measurement behind.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, desc, eq } from "drizzle-orm";
import { closeDb, getDb } from "@/server/db/client";
import { logbookEvents, measurements } from "@/server/db/schema";
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
    const [m] = await getDb()
      .select()
      .from(measurements)
      .where(and(eq(measurements.status, "done"), eq(measurements.purpose, "routine")))
      .orderBy(desc(measurements.createdAt))
      .limit(1);
    expect(m, "a finished routine measurement from an earlier journey").toBeTruthy();
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
