import type { Page } from "playwright-core";

/** The admin's members page. */
export class MembersPage {
  constructor(private readonly page: Page) {}

  async invite(email: string, role: string): Promise<void> {
    // exact: each member's row has its own "Role of …" select too
    await this.page.getByLabel("Email", { exact: true }).fill(email);
    await this.page.getByLabel("Role", { exact: true }).selectOption(role);
    await this.page.getByRole("button", { name: "Send invitation" }).click();
    await this.page.getByText("Invitation sent.").waitFor();
  }

  async setRole(name: string, role: string): Promise<void> {
    await this.page.getByLabel(`Role of ${name}`).selectOption(role);
  }

  roleOf(name: string) {
    return this.page.getByLabel(`Role of ${name}`);
  }

  alert() {
    return this.page.getByRole("alert");
  }
}
