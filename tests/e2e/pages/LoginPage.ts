import type { Page } from "playwright-core";

/** The sign-in form (CONTRACT.md §7: fields labelled "Email" and "Password"). */
export class LoginPage {
  constructor(private readonly page: Page, private readonly baseUrl: string) {}

  async signIn(email: string, password: string, then = "/"): Promise<void> {
    await this.page.goto(`${this.baseUrl}/login`);
    await this.page.getByLabel("Email").fill(email);
    await this.page.getByLabel("Password").fill(password);
    await this.page.getByRole("button", { name: /sign in/i }).click();
    await this.page.waitForURL((url) => !url.pathname.startsWith("/login"));
    if (then !== "/") await this.page.goto(`${this.baseUrl}${then}`);
  }
}
