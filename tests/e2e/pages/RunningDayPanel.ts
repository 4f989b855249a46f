import type { Locator, Page } from "playwright-core";

/** The live page's running-day parts: layout status, why at danger, session control, board lamps. */
export class RunningDayPanel {
  constructor(private readonly page: Page) {}

  layoutStatus(): Locator {
    return this.page.locator("[data-layout-status]");
  }

  async waitForStatus(level: string, timeout = 10_000): Promise<void> {
    await this.page.locator(`[data-layout-status="${level}"]`).waitFor({ timeout });
  }

  /** Opens "Why is SIGNAL at danger?" and returns its text. */
  async whyAtDanger(signal: string): Promise<string> {
    const item = this.page.locator(`[data-why="${signal}"]`);
    await item.locator("summary").click();
    return item.innerText();
  }

  /** The fix buttons offered under "Why is SIGNAL at danger?". */
  fixButton(signal: string, name: string): Locator {
    return this.page.locator(`[data-why="${signal}"]`).getByRole("button", { name, exact: true });
  }

  sessionState(): Locator {
    return this.page.locator("[data-session-state]");
  }

  async startOrEndDay(button: "Start running day" | "End running day", note: string): Promise<void> {
    await this.page.getByLabel("Note (optional)").fill(note);
    await this.page.getByRole("button", { name: button, exact: true }).click();
    await this.page.locator(`[data-session-state="${button === "Start running day" ? "open" : "closed"}"]`).waitFor();
  }

  tickerRows(status: string): Locator {
    return this.page.locator(`[aria-label="Live events, newest first"] [data-event-status="${status}"]`);
  }

  stateRow(signal: string): Locator {
    return this.page.locator(`[data-state-signal="${signal}"]`);
  }
}
