import { afterEach, beforeEach, describe, expect, it } from "vitest";
import { BASE_URL, demoCredentials, openBrowser, screenshot, type Role, type Session } from "./browser";
import { SignInPage } from "./pages/sign-in-page";

const NAV: Record<Role, string[]> = {
  admin: ["Dashboard", "Instruments", "Stacks", "Medium planner", "Service visits", "Settings"],
  staff: ["Dashboard", "Instruments", "Stacks", "Medium planner", "Service visits", "Settings"],
  researcher: ["Dashboard", "Instruments", "Stacks", "Medium planner"],
  engineer: ["Dashboard", "Instruments", "Stacks", "Medium planner", "Service visits"],
};

describe("sign-in journeys", () => {
  let s: Session;
  beforeEach(async () => {
    s = await openBrowser();
  });
  afterEach(async () => {
    await s.close();
  });

  it("admin signs in and sees the facility dashboard", async () => {
    const signIn = new SignInPage(s.page);
    await signIn.goto();
    const { email, password } = demoCredentials("admin");
    await signIn.signIn(email, password);
    await s.page.waitForURL(`${BASE_URL}/dashboard`);
    await expect(s.page.locator("h1").first().textContent()).resolves.toBe("Dashboard");
    await expect(s.page.getByTestId("facility-name").textContent()).resolves.toContain(
      "Larkspur Institute Imaging Core",
    );
    await expect(s.page.getByTestId("user-role").textContent()).resolves.toBe("Facility admin");
    const rows = await s.page.locator("[data-testid=objective-status-table] tbody tr").count();
    expect(rows).toBeGreaterThanOrEqual(5);
    await screenshot(s.page, "admin-dashboard");
    expect(s.problems).toEqual([]);
  });

  it.each(["staff", "researcher", "engineer"] as const)(
    "%s sees the navigation of their role",
    async (role) => {
      const signIn = new SignInPage(s.page);
      await signIn.goto();
      const { email, password } = demoCredentials(role);
      await signIn.signIn(email, password);
      await s.page.waitForURL(`${BASE_URL}/dashboard`);
      const nav = await s.page.locator("nav[aria-label=Main] a").allTextContents();
      expect(nav).toEqual(NAV[role]);
      expect(s.problems).toEqual([]);
    },
  );

  it("a researcher who opens Settings gets a 403 page, not a crash", async () => {
    const signIn = new SignInPage(s.page);
    await signIn.goto();
    const { email, password } = demoCredentials("researcher");
    await signIn.signIn(email, password);
    await s.page.waitForURL(`${BASE_URL}/dashboard`);
    const res = await s.page.goto(`${BASE_URL}/settings`);
    expect(res?.status()).toBe(403);
    await expect(s.page.locator("h1").textContent()).resolves.toContain("not open to your role");
    await screenshot(s.page, "researcher-settings-403");
  });

  it("the engineer sees only the instrument of the current visit", async () => {
    const signIn = new SignInPage(s.page);
    await signIn.goto();
    const { email, password } = demoCredentials("engineer");
    await signIn.signIn(email, password);
    await s.page.waitForURL(`${BASE_URL}/dashboard`);
    await s.page.goto(`${BASE_URL}/instruments`);
    const cards = await s.page.locator("[data-testid=instrument-card] h2").allTextContents();
    expect(cards).toEqual(["Spinning disk West (room 3.02)"]);
  });

  it("says clearly when the e-mail is unknown or the password wrong", async () => {
    const signIn = new SignInPage(s.page);
    await signIn.goto();
    await signIn.signIn("nobody@larkspur.example", "whatever-password");
    await signIn.expectError("No account uses this e-mail address");
    await signIn.signIn("staff@larkspur.example", "not-the-password");
    await signIn.expectError("The password is not right");
    await screenshot(s.page, "sign-in-wrong-password");
  });

  it("an expired or tampered session sends the user to sign-in with a reason", async () => {
    await s.context.addCookies([{ name: "authjs.session-token", value: "expired-or-forged", url: BASE_URL }]);
    await s.page.goto(`${BASE_URL}/dashboard`);
    await s.page.waitForURL(/\/sign-in\?reason=expired/);
    await expect(s.page.locator("[role=status]").textContent()).resolves.toContain(
      "Your session has expired",
    );
  });
});
