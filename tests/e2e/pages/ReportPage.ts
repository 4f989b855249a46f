import type { Locator, Page } from "playwright-core";

/** The running-day report of one session. */
export class ReportPage {
  constructor(private readonly page: Page, private readonly baseUrl: string) {}

  async open(slug: string, session: number): Promise<void> {
    await this.page.goto(`${this.baseUrl}/layouts/${slug}/sessions/${session}/report`);
    await this.page.locator('[data-testid="priority-summary"]').waitFor();
  }

  prioritySummary(): Locator {
    return this.page.locator('[data-testid="priority-summary"]');
  }

  routeRow(route: string): Locator {
    return this.page.locator(`[data-route="${route}"]`);
  }

  checks(): Locator {
    return this.page.locator("[data-check]");
  }

  timelineCanvas(signal: string): Locator {
    return this.page.locator(`[data-timeline="${signal}"] canvas`);
  }

  nodeRow(node: string): Locator {
    return this.page.locator(`[data-node-row="${node}"]`);
  }

  /** Follows the first check's replay link. */
  async openFirstCheckInReplay(): Promise<void> {
    await this.checks().first().getByRole("link").click();
    await this.page.waitForURL(/\/replay\?step=\d+/);
  }

  /** The JS files the page loaded (names only). */
  async scriptsLoaded(): Promise<string[]> {
    return this.page.evaluate(() => performance.getEntriesByType("resource").map((e) => e.name.split("/").pop() ?? "").filter((n) => n.endsWith(".js")));
  }

  async pdf(file: string): Promise<void> {
    await this.page.emulateMedia({ media: "print" });
    await this.page.pdf({ path: file, format: "A4", landscape: true, printBackground: false });
    await this.page.emulateMedia({ media: "screen" });
  }
}
