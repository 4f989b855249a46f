import type { Page } from "playwright-core";

/** The first-start setup page, opened from the link `npm start` prints. */
export class SetupPage {
  constructor(private readonly page: Page) {}

  async open(link: string): Promise<void> {
    await this.page.goto(link);
    await this.page.getByRole("heading", { name: "Set up your society" }).waitFor();
  }

  passwordRule() {
    return this.page.getByText(/At least 10 characters/);
  }

  async fill(values: { society: string; name: string; email: string; password: string }): Promise<void> {
    await this.page.getByLabel("Society name").fill(values.society);
    await this.page.getByLabel("Your name").fill(values.name);
    await this.page.getByLabel("Email").fill(values.email);
    await this.page.getByLabel("Password").fill(values.password);
  }

  async submit(): Promise<void> {
    await this.page.getByRole("button", { name: "Create the society and my account" }).click();
  }

  fieldError(text: string) {
    return this.page.getByText(text);
  }

  done() {
    return this.page.getByRole("heading", { name: "Your society is set up" });
  }
}

/** The admin's outbox: the mail the product sent, readable with no outgoing mail server. */
export class OutboxPage {
  constructor(private readonly page: Page, private readonly baseUrl: string) {}

  /** The first link to `path` in the newest mail to `to` (waits until it has arrived). */
  async linkIn(to: string, path: string): Promise<string> {
    await this.page.goto(`${this.baseUrl}/admin/outbox`);
    const mail = this.page.locator("li[data-mail]").filter({ hasText: to }).first();
    await mail.waitFor({ timeout: 10_000 });
    const body = (await mail.locator("pre").textContent()) ?? "";
    const match = new RegExp(`https?://\\S+${path}[A-Za-z0-9_-]+`).exec(body);
    if (!match) throw new Error(`no ${path} link in the mail to ${to}`);
    return match[0];
  }
}

/** The invitee's page: name and password. */
export class InvitePage {
  constructor(private readonly page: Page) {}

  async accept(link: string, name: string, password: string): Promise<void> {
    await this.page.goto(link);
    await this.page.getByLabel("Your name").fill(name);
    await this.page.getByLabel("Password").fill(password);
    await this.page.getByRole("button", { name: "Create my account" }).click();
    await this.page.getByText("Your account is ready.").waitFor();
  }
}

/** One's own account page. */
export class AccountPage {
  constructor(private readonly page: Page, private readonly baseUrl: string) {}

  async open(): Promise<void> {
    await this.page.goto(`${this.baseUrl}/account`);
    await this.page.getByRole("heading", { name: "Your account" }).waitFor();
  }

  async changePassword(current: string, next: string): Promise<void> {
    const panel = this.page.getByRole("region", { name: "Password" });
    await panel.getByLabel("Current password").fill(current);
    await panel.getByLabel("New password", { exact: true }).fill(next);
    await panel.getByLabel("Repeat the new password").fill(next);
    await panel.getByRole("button", { name: "Change my password" }).click();
  }

  message() {
    return this.page.getByRole("region", { name: "Password" }).getByRole("status");
  }
}
