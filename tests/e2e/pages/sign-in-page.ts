import type { Page } from "playwright-core";
import { BASE_URL, demoCredentials, type Role } from "../browser";

export class SignInPage {
  constructor(private readonly page: Page) {}

  async goto(query = "") {
    await this.page.goto(`${BASE_URL}/sign-in${query}`);
  }

  async signIn(email: string, password: string) {
    await this.page.fill("#email", email);
    await this.page.fill("#password", password);
    await this.page.click("button[type=submit]");
  }

  /** Wait until the form's error message contains `text`. */
  async expectError(text: string) {
    await this.page.getByTestId("sign-in-error").filter({ hasText: text }).waitFor({ timeout: 10_000 });
  }
}

/** Sign in as a demo role (or any e-mail and password) and wait for the dashboard. */
export async function signInAs(page: Page, who: Role | { email: string; password: string }) {
  const c = typeof who === "string" ? demoCredentials(who) : who;
  const signIn = new SignInPage(page);
  await signIn.goto();
  await signIn.signIn(c.email, c.password);
  await page.waitForURL(`${BASE_URL}/dashboard`, { timeout: 20_000 });
}
