/**
 * The facility admin's journey: tighten an objective's axial acceptance limit, invite a
 * new staff member, and see the invitation through — mail read from the outbox file (the
 * e2e app has no mail server), the link followed in a fresh browser, a password set, and
 * the first sign-in of the new person.
 */
import { readFileSync } from "node:fs";
import path from "node:path";
import { randomUUID } from "node:crypto";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { closeDb, getDb } from "@/server/db/client";
import { objectives } from "@/server/db/schema";
import { api, tokenFor } from "./api-client";
import { BASE_URL, openBrowser, screenshot, type Session } from "./browser";
import { demoObjective } from "./demo-ids";
import { signInAs } from "./pages/sign-in-page";

const OUTBOX = path.resolve(process.env.DATA_DIR ?? ".data", "outbox.jsonl");
// Under `npm start` mail travels over SMTP to the local capture server, which writes here instead.
const CAPTURE = path.resolve(".data", "mail-capture.jsonl");

let s: Session;
let objective: Awaited<ReturnType<typeof demoObjective>>;
let adminToken: string;

beforeAll(async () => {
  objective = await demoObjective("100× / 1.45 oil");
  adminToken = await tokenFor("admin@larkspur.example");
  s = await openBrowser();
});
afterAll(async () => {
  // Put the demo lens's limit back as it was (the journey changes it).
  await api(adminToken, "PATCH", `/api/v1/objectives/${objective.id}`, {
    headers: { "Content-Type": "application/json" },
    body: JSON.stringify({ axialRatioLimit: objective.axialRatioLimit }),
  });
  await s?.close();
  await closeDb();
});

/** The newest outbox message to `email`, waiting briefly for it to be written. */
async function mailTo(email: string): Promise<{ subject: string; text: string }> {
  for (let i = 0; i < 50; i++) {
    const lines: string[] = [];
    for (const file of [OUTBOX, CAPTURE]) {
      try {
        lines.push(...readFileSync(file, "utf8").trim().split("\n"));
      } catch {
        /* not written yet */
      }
    }
    const found = lines
      .filter(Boolean)
      .map((l) => JSON.parse(l) as { to: string[]; subject: string; text: string })
      .filter((m) => m.to.includes(email));
    if (found.length) return found[found.length - 1]!;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`no mail to ${email} in ${OUTBOX} or ${CAPTURE}`);
}

describe("facility admin", () => {
  it("changes an objective's axial acceptance limit", async () => {
    const { page } = s;
    await signInAs(page, "admin");
    await page.goto(`${BASE_URL}/instruments`);
    await page.click(`a[href="/instruments/objectives/${objective.id}"]`);
    await page.waitForURL(`${BASE_URL}/instruments/objectives/${objective.id}`);
    const form = page.getByTestId("limits-form");
    await form.waitFor();
    const next = objective.axialRatioLimit === 1.4 ? "1.45" : "1.4";
    await page.fill("#lim-ax", next);
    await form.locator("button").click();
    await form.locator("[role=status]").filter({ hasText: "Saved." }).waitFor({ timeout: 10_000 });
    const [row] = await getDb().select().from(objectives).where(eq(objectives.id, objective.id));
    expect(row!.axialRatioLimit).toBe(Number(next));
    await page.reload();
    expect(await page.inputValue("#lim-ax")).toBe(next);
    await screenshot(page, "admin-objective-limits");
    expect(s.problems).toEqual([]);
  });

  it("invites a new staff member who follows the mailed link, sets a password and signs in", async () => {
    const { page } = s;
    await signInAs(page, "admin");
    const email = `new-staff-${randomUUID().slice(0, 8)}@larkspur.example`;
    await page.goto(`${BASE_URL}/settings`);
    const form = page.getByTestId("invite-form");
    await form.waitFor();
    await form.locator("#invite-email").fill(email);
    await form.locator("#invite-role").selectOption("staff");
    await form.locator("button", { hasText: "Send invitation" }).click();
    await form.locator("[role=status]").waitFor({ timeout: 15_000 });
    await page.waitForFunction((e) => document.body.textContent?.includes(e), email, { timeout: 10_000 });
    await screenshot(page, "admin-invitation-sent");
    expect(s.problems).toEqual([]);

    const mail = await mailTo(email);
    const link = /https?:\/\/[^\s"<>]+\/invite\/[A-Za-z0-9_-]+/.exec(mail.text)?.[0];
    expect(link, mail.text).toBeTruthy();

    const fresh = await openBrowser();
    try {
      const p = fresh.page;
      // The mail's link, on the server under test (APP_URL may name another port).
      await p.goto(`${BASE_URL}${new URL(link!).pathname}`);
      await p.getByTestId("accept-invitation-form").waitFor();
      expect(await p.locator("h1").textContent()).toContain("Larkspur Institute Imaging Core");
      const password = `e2e-${randomUUID()}`;
      await p.fill("#invite-name", "Wren Halloway");
      await p.fill("#invite-password", password);
      await p.fill("#invite-confirm", password);
      await screenshot(p, "invitation-accept");
      await p.click("button[type=submit]");
      await p.waitForURL(/\/sign-in\?reason=invited/, { timeout: 15_000 });
      await signInAs(p, { email, password });
      expect(await p.getByTestId("user-role").textContent()).toBe("Facility staff");
      await screenshot(p, "invited-staff-dashboard");
      expect(fresh.problems).toEqual([]);
    } finally {
      await fresh.close();
    }
  });
});
