import type { Page } from "playwright-core";

/** The admin's members page. */
export class MembersPage {
  constructor(private readonly page: Page) {}

  async invite(email: string, role: string): Promise<void> {
    await this.page.getByLabel("Email").fill(email);
    await this.page.getByLabel("Role").selectOption(role);
    await this.page.getByRole("button", { name: "Send invitation" }).click();
    await this.page.getByText("Invitation sent.").waitFor();
  }
}
