/**
 * Debian's Chromium driven by playwright-core (never a downloaded browser), with
 * the flags this machine needs (no background networking: the network is closed).
 * Every page records console errors and failed requests so a journey can fail on them.
 */
import { mkdtempSync, mkdirSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { chromium, type BrowserContext, type Page } from "playwright-core";

export const BASE_URL = process.env.E2E_BASE_URL ?? "http://localhost:3100";
export const SCREENSHOT_DIR = process.env.E2E_SCREENSHOT_DIR ?? path.resolve("test-results/screenshots");

export type Role = "admin" | "staff" | "researcher" | "engineer";

export function demoCredentials(role: Role): { email: string; password: string } {
  const file = process.env.E2E_PASSWORDS_FILE ?? ".data/demo-credentials.json";
  const passwords = JSON.parse(readFileSync(file, "utf8")) as Record<Role, string>;
  return { email: `${role}@larkspur.example`, password: passwords[role] };
}

export interface Session {
  context: BrowserContext;
  page: Page;
  problems: string[];
  close: () => Promise<void>;
}

export async function openBrowser(): Promise<Session> {
  const userDir = mkdtempSync(path.join(tmpdir(), "bb-chromium-"));
  const context = await chromium.launchPersistentContext(userDir, {
    executablePath: "/usr/bin/chromium",
    headless: true,
    viewport: { width: 1400, height: 900 },
    args: [
      "--headless",
      "--no-sandbox",
      "--disable-gpu",
      "--disable-quic",
      "--no-first-run",
      "--disable-background-networking",
      "--disable-component-update",
      "--disable-sync",
    ],
  });
  const page = context.pages()[0] ?? (await context.newPage());
  const problems: string[] = [];
  page.on("console", (msg) => {
    // `next dev` (only) logs this under our CSP; a production build never does.
    if (msg.text().includes("React requires eval() in development mode")) return;
    if (msg.type() === "error") problems.push(`console: ${msg.text()} @ ${msg.location().url}`);
  });
  page.on("pageerror", (err) => problems.push(`page error: ${err.message}`));
  page.on("requestfailed", (req) => {
    // Navigations away from a page abort its pending requests; that is not a failure.
    if (req.failure()?.errorText === "net::ERR_ABORTED") return;
    problems.push(`request failed: ${req.url()} ${req.failure()?.errorText}`);
  });
  page.on("response", (res) => {
    if (res.status() >= 500 || res.status() === 404) problems.push(`HTTP ${res.status()}: ${res.url()}`);
  });
  return {
    context,
    page,
    problems,
    close: async () => {
      await context.close();
      rmSync(userDir, { recursive: true, force: true });
    },
  };
}

export async function screenshot(page: Page, name: string): Promise<string> {
  mkdirSync(SCREENSHOT_DIR, { recursive: true });
  const file = path.join(SCREENSHOT_DIR, `${name}.png`);
  await page.screenshot({ path: file, fullPage: true });
  return file;
}
