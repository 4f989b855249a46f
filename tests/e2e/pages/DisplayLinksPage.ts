import type { Page } from "playwright-core";

/** The admin's display-link page of one layout. */
export class DisplayLinksPage {
  constructor(private readonly page: Page, private readonly baseUrl: string) {}

  async open(slug: string): Promise<void> {
    await this.page.goto(`${this.baseUrl}/layouts/${slug}/display-links`);
  }

  /** Makes a link and returns its full URL, shown once. */
  async make(label: string): Promise<string> {
    await this.page.getByLabel(/label/i).fill(label);
    await this.page.getByRole("button", { name: "Make link" }).click();
    const link = this.page.locator("[data-display-link]");
    await link.waitFor();
    return (await link.getAttribute("href")) ?? "";
  }

  async revoke(label: string): Promise<void> {
    const row = this.page.locator("li", { hasText: label });
    await row.getByRole("button", { name: "Revoke" }).click();
    await row.getByText(/revoked/).waitFor();
  }
}
