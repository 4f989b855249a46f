import type { Locator, Page } from "playwright-core";

/** The sessions of one layout and the chosen session's event log. */
export class SessionsPage {
  constructor(private readonly page: Page, private readonly baseUrl: string) {}

  async open(slug: string): Promise<void> {
    await this.page.goto(`${this.baseUrl}/layouts/${slug}/sessions`);
    await this.eventLog().waitFor();
  }

  private eventLog(): Locator {
    return this.page.locator("table", { has: this.page.locator("caption", { hasText: /^Event log$/ }) });
  }

  eventRows(): Locator {
    return this.eventLog().locator("tbody tr");
  }

  pageStatus(): Locator {
    return this.page.getByRole("region", { name: /Event log of session/ }).getByRole("status").first();
  }

  async filter(label: "Kind" | "Status" | "Detector" | "Node", value: string): Promise<void> {
    await this.page.getByLabel(label, { exact: true }).selectOption(value);
  }

  downloadLink(format: "JSONL" | "CSV"): Locator {
    return this.page.getByRole("link", { name: `Download ${format}` });
  }

  async openReplay(): Promise<void> {
    await this.page.getByRole("link", { name: "Replay this session" }).click();
  }
}
