import type { Locator, Page } from "playwright-core";

/** Counts what a person would do: clicks (a drag counts as one) and fields filled. */
export class Effort {
  clicks = 0;
  fields = 0;
  readonly started = Date.now();

  async click(target: Locator): Promise<void> {
    this.clicks++;
    await target.click();
  }

  async fill(target: Locator, value: string): Promise<void> {
    this.fields++;
    await target.fill(value);
  }

  async check(target: Locator): Promise<void> {
    this.clicks++;
    await target.check();
  }

  elapsedS(): number {
    return (Date.now() - this.started) / 1000;
  }
}

/** The layouts list's "New layout" form and a layout's workbench (records and schematic). */
export class WorkbenchPage {
  constructor(
    private readonly page: Page,
    private readonly baseUrl: string,
    private readonly effort: Effort,
  ) {}

  async createLayout(name: string, slug: string, scale: string): Promise<void> {
    await this.page.goto(`${this.baseUrl}/`);
    const form = this.page.getByRole("form", { name: "New layout" });
    await this.effort.fill(form.getByLabel("Name"), name);
    await this.effort.fill(form.getByLabel("Slug"), slug);
    this.effort.clicks++;
    await form.getByLabel("Scale").selectOption(scale);
    await this.effort.click(form.getByRole("button", { name: "Create layout" }));
    await this.page.waitForURL(`**/layouts/${slug}/edit`);
  }

  /** Opens the "Add …" form of one records table and fills it; `ticks` are checkbox labels. */
  async addRecord(noun: string, fields: Record<string, string>, ticks: string[] = []): Promise<void> {
    await this.effort.click(this.page.getByRole("button", { name: `Add ${noun}`, exact: true }));
    const form = this.page.getByRole("form", { name: `New ${noun}` });
    for (const [label, value] of Object.entries(fields)) {
      const field = form.getByLabel(label, { exact: true });
      if ((await field.evaluate((el) => el.tagName)) === "SELECT") {
        this.effort.clicks++;
        await field.selectOption(value);
      } else await this.effort.fill(field, value);
    }
    for (const tick of ticks) await this.effort.check(form.getByLabel(tick, { exact: true }));
    await this.effort.click(form.getByRole("button", { name: "Keep" }));
    await form.waitFor({ state: "detached" });
  }

  async tab(name: "Records" | "Schematic"): Promise<void> {
    await this.effort.click(this.page.getByRole("tab", { name }));
  }

  editor(): Locator {
    return this.page.locator('svg[aria-roledescription="schematic editor"]');
  }

  /** A point of the drawing (its own units) in page pixels. */
  async screenPoint(x: number, y: number): Promise<{ x: number; y: number }> {
    await this.editor().scrollIntoViewIfNeeded();
    return this.editor().evaluate(
      (svg, [px, py]) => {
        const s = svg as SVGSVGElement;
        const p = s.createSVGPoint();
        p.x = px;
        p.y = py;
        const q = p.matrixTransform(s.getScreenCTM()!);
        return { x: q.x, y: q.y };
      },
      [x, y],
    );
  }

  /** Draws a line's track by clicking its bends on the grid. */
  async drawTrack(line: string, points: [number, number][]): Promise<void> {
    await this.effort.click(this.page.getByRole("button", { name: `Draw ${line}`, exact: true }));
    for (const [x, y] of points) {
      const p = await this.screenPoint(x, y);
      this.effort.clicks++;
      await this.page.mouse.click(p.x, p.y);
    }
    await this.effort.click(this.page.getByRole("button", { name: "Finish track" }));
  }

  private async drag(from: { x: number; y: number }, to: { x: number; y: number }): Promise<void> {
    this.effort.clicks++;
    await this.page.mouse.move(from.x, from.y);
    await this.page.mouse.down();
    const steps = 6;
    for (let i = 1; i <= steps; i++) await this.page.mouse.move(from.x + ((to.x - from.x) * i) / steps, from.y + ((to.y - from.y) * i) / steps);
    await this.page.mouse.up();
  }

  /** Drags a new detector, signal or points from the palette onto the drawing. */
  async dropNew(kind: "detectors" | "signals" | "points", x: number, y: number): Promise<void> {
    const chip = await this.page.locator(`[data-palette="${kind}"]`).boundingBox();
    await this.drag({ x: chip!.x + chip!.width / 2, y: chip!.y + chip!.height / 2 }, await this.screenPoint(x, y));
  }

  /** Drags an item already drawn to another point of the drawing. */
  async dragItem(kind: string, id: string, x: number, y: number): Promise<void> {
    const box = await this.editor().locator(`[data-item="${kind}:${id}"]`).boundingBox();
    await this.drag({ x: box!.x + box!.width / 2, y: box!.y + box!.height / 2 }, await this.screenPoint(x, y));
  }

  item(kind: string, id: string): Locator {
    return this.editor().locator(`[data-item="${kind}:${id}"]`);
  }

  async save(): Promise<void> {
    await this.effort.click(this.page.getByRole("button", { name: "Save layout" }));
    await this.page.getByRole("status").filter({ hasText: /^Saved/ }).waitFor();
  }
}

/** "New junction from a template": pick, map roles, generate, save, prove, publish. */
export class JunctionWizardPage {
  constructor(
    private readonly page: Page,
    private readonly effort: Effort,
  ) {}

  async pick(label: string): Promise<void> {
    await this.effort.check(this.page.getByRole("radio", { name: new RegExp(label) }));
  }

  async generate(): Promise<void> {
    await this.effort.click(this.page.getByRole("button", { name: "Generate the rules" }));
    await this.page.getByRole("list", { name: "Generated rules" }).waitFor();
  }

  rules(): Locator {
    return this.page.getByRole("list", { name: "Generated rules" }).getByRole("listitem");
  }

  async saveDraft(): Promise<number> {
    await this.effort.click(this.page.getByRole("button", { name: "Save as a draft" }));
    const status = this.page.getByRole("status").filter({ hasText: /Saved as draft version \d+/ });
    await status.waitFor();
    return Number(/version (\d+)/.exec((await status.textContent()) ?? "")![1]);
  }

  async prove(version: number, timeout = 60_000): Promise<string> {
    await this.effort.click(this.page.getByRole("button", { name: `Prove v${version}`, exact: true }));
    const verdict = this.page.getByRole("status").filter({ hasText: /^(Proved|Refuted|Unfinished):/ }).first();
    await verdict.waitFor({ timeout });
    return (await verdict.textContent()) ?? "";
  }

  async publish(version: number): Promise<void> {
    await this.effort.click(this.page.getByRole("button", { name: `Publish v${version}`, exact: true }).first());
    const dialog = this.page.getByRole("dialog");
    await this.effort.click(dialog.getByRole("button", { name: `Publish v${version}`, exact: true }));
    await dialog.waitFor({ state: "detached" });
    await this.page.getByRole("status").filter({ hasText: `Version ${version} runs live` }).waitFor();
  }
}
