import type { Locator, Page } from "playwright-core";

/** The live control room of one layout. */
export class LivePage {
  constructor(private readonly page: Page, private readonly baseUrl: string) {}

  async open(slug: string): Promise<void> {
    await this.page.goto(`${this.baseUrl}/layouts/${slug}/live`);
    await this.page.locator('[data-connection="live"]').first().waitFor();
  }

  signal(id: string): Locator {
    return this.page.locator(`svg [data-signal="${id}"]`);
  }

  detector(id: string): Locator {
    return this.page.locator(`svg [data-detector="${id}"]`);
  }

  async aspectOf(id: string): Promise<string | null> {
    return this.signal(id).getAttribute("data-aspect");
  }

  /** Waits until the signal shows `aspect` (the page updates by itself). */
  async waitForAspect(id: string, aspect: string, timeout = 10_000): Promise<void> {
    await this.page.locator(`svg [data-signal="${id}"][data-aspect="${aspect}"]`).waitFor({ timeout });
  }

  alarmBanner(): Locator {
    return this.page.locator('[data-alarm-banner="attention"]');
  }

  /** Opens a command's confirmation, gives the reason and confirms. */
  async command(buttonName: string, reason: string, confirmName: string): Promise<void> {
    await this.page.getByRole("button", { name: buttonName, exact: true }).click();
    const dialog = this.page.getByRole("dialog");
    await dialog.getByLabel(/reason/i).fill(reason);
    await dialog.getByRole("button", { name: confirmName, exact: true }).click();
    await dialog.waitFor({ state: "detached" });
  }

  async screenshot(file: string): Promise<void> {
    await this.page.screenshot({ path: file, fullPage: true });
  }
}
