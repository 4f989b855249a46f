import type { Locator, Page } from "playwright-core";

/** The alarm list of one layout. */
export class AlarmsPage {
  constructor(private readonly page: Page, private readonly baseUrl: string) {}

  async open(slug: string): Promise<void> {
    await this.page.goto(`${this.baseUrl}/layouts/${slug}/alarms`);
  }

  alarmsOfKind(kind: string): Locator {
    return this.page.locator(`[data-alarm-kind="${kind}"]`);
  }

  async acknowledgeFirst(kind: string, comment: string): Promise<void> {
    const alarm = this.alarmsOfKind(kind).first();
    await alarm.getByLabel(/comment/i).fill(comment);
    await alarm.getByRole("button", { name: "Acknowledge" }).click();
    await alarm.getByText("acknowledged", { exact: true }).waitFor();
  }
}
