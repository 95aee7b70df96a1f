import type { Page } from "playwright-core";
import { BASE_URL } from "../browser";

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
