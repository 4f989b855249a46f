import type { Locator, Page } from "playwright-core";

/** The replay player of one session: playback, the recorded and what-if mimics, the what-if summary. */
export class ReplayPage {
  constructor(private readonly page: Page) {}

  async waitForReady(): Promise<void> {
    await this.page.getByRole("button", { name: "Step forward" }).waitFor();
  }

  private run(which: "recorded" | "what-if"): Locator {
    return this.page.getByRole("region", { name: which === "recorded" ? /^Recorded run/ : /^What-if run/ });
  }

  async aspectOf(which: "recorded" | "what-if", signal: string): Promise<string | null> {
    return this.run(which).locator(`svg [data-signal="${signal}"]`).getAttribute("data-aspect");
  }

  async stepForward(): Promise<void> {
    await this.page.getByRole("button", { name: "Step forward" }).click();
  }

  async scrubTo(step: number): Promise<void> {
    await this.page.getByRole("slider").fill(String(step));
  }

  async chooseWhatIf(label: RegExp): Promise<void> {
    const select = this.page.getByLabel("Replay the same inputs against");
    const options = await select.locator("option").allTextContents();
    const wanted = options.find((o) => label.test(o));
    if (!wanted) throw new Error(`no what-if option like ${label}: ${options.join(" | ")}`);
    await select.selectOption({ label: wanted });
    await this.run("what-if").waitFor();
  }

  whatIfSummary(): Locator {
    return this.page.getByRole("region", { name: "What-if" }).getByRole("status");
  }

  differencesHere(): Locator {
    return this.page.getByRole("table", { name: /Differs at step/ }).locator("tbody tr");
  }
}
