import type { Locator, Page } from "playwright-core";

/** The alarm settings on the alarms page. */
export class AlarmSettingsPanel {
  constructor(private readonly page: Page, private readonly baseUrl: string) {}

  async open(slug: string): Promise<void> {
    await this.page.goto(`${this.baseUrl}/layouts/${slug}/alarms`);
    await this.page.getByRole("table", { name: "Alarm settings" }).waitFor();
  }

  field(label: string): Locator {
    return this.page.getByLabel(label, { exact: true });
  }

  async save(values: Record<string, string>): Promise<void> {
    for (const [label, value] of Object.entries(values)) await this.field(label).fill(value);
    await this.page.getByRole("button", { name: "Save alarm settings" }).click();
  }

  saved(): Locator {
    return this.page.getByText("Saved; the watchers use them now.");
  }

  fieldError(key: string): Locator {
    return this.page.locator(`[data-setting="${key}"] .text-notice-error`);
  }
}
