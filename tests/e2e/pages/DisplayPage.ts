import type { Locator, Page } from "playwright-core";

/** The visitor display behind a display link. */
export class DisplayPage {
  constructor(private readonly page: Page, private readonly baseUrl: string) {}

  async open(token: string): Promise<void> {
    await this.page.goto(`${this.baseUrl}/display/${token}`);
    await this.page.locator("svg [data-signal]").first().waitFor();
  }

  signal(id: string): Locator {
    return this.page.locator(`svg [data-signal="${id}"]`);
  }

  /** Every button, input, select, textarea and element with a button/textbox role. */
  controls(): Locator {
    return this.page.locator('button, input, select, textarea, [role="button"], [role="textbox"], [contenteditable="true"]');
  }

  async screenshot(file: string): Promise<void> {
    await this.page.screenshot({ path: file });
  }
}
