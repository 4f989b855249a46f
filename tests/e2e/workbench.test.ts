/**
 * The engineer's workbench in a real browser, from nothing to a live junction: a new layout,
 * its lines and a node as records, the track drawn and the detectors, signals and points
 * dragged onto it, a converging junction from the template, proved and published, and a
 * pulse from a test board (real MQTT) clearing the signal on the live mimic. Prints the
 * clicks and the time it took. Needs `npm run build` first.
 */
import fs from "node:fs";
import path from "node:path";
import type { Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { DEMO_PASSWORD, demoEmail } from "../../server/db/seed/demo";
import { connectBoard, startLiveHarness, type Board, type LiveHarness } from "../support/live";
import { startTestApp, type TestApp } from "../support/testApp";
import { ARTIFACTS, chromiumAvailable, openBrowser } from "./pages/browser";
import { LivePage } from "./pages/LivePage";
import { LoginPage } from "./pages/LoginPage";
import { Effort, JunctionWizardPage, WorkbenchPage } from "./pages/WorkbenchPage";

const SLUG = "kestrel-bank-rebuilt";
const built = fs.existsSync(path.resolve("dist/index.html"));

describe.skipIf(!built || !chromiumAvailable())("the workbench: a new junction in the browser", () => {
  let t: TestApp;
  let live: LiveHarness;
  let browser: Awaited<ReturnType<typeof openBrowser>>;
  let page: Page;
  let board: Board | undefined;
  const effort = new Effort();

  beforeAll(async () => {
    fs.mkdirSync(ARTIFACTS, { recursive: true });
    t = await startTestApp({ config: { serveClient: true } });
    live = await startLiveHarness(t);
    browser = await openBrowser();
    page = await browser.context.newPage();
    // A step that cannot happen fails in seconds, naming what it waited for.
    page.setDefaultTimeout(10_000);
    await new LoginPage(page, live.httpUrl).signIn(demoEmail("engineer"), DEMO_PASSWORD);
  });

  afterAll(async () => {
    await board?.end();
    await browser?.close();
    await live?.close();
    await t?.close();
  });

  it("creates the layout, records its lines and board, and draws it by dragging", async () => {
    const bench = new WorkbenchPage(page, live.httpUrl, effort);
    await bench.createLayout("Kestrel Bank Junction (rebuilt)", SLUG, "G");
    await bench.addRecord("line", { Id: "main", Name: "Main line up the bank" });
    await bench.addRecord("line", { Id: "branch", Name: "Quarry branch" });

    await bench.tab("Schematic");
    // 600 drawing units of main line read as 20 m (30 units a metre); the branch joins at x = 380.
    await bench.drawTrack("main", [[40, 200], [640, 200]]);
    await bench.drawTrack("branch", [[40, 80], [300, 80], [380, 200]]);
    for (const x of [100, 340, 460]) await bench.dropNew("detectors", x, 200);
    for (const x of [80, 260]) await bench.dropNew("detectors", x, 80);
    await bench.dropNew("signals", 340, 200);
    await bench.dropNew("signals", 260, 80);
    await bench.dropNew("points", 380, 200);
    expect(await bench.item("detectors", "D1").getAttribute("data-at")).toBe("2");
    // Dragging a detector along its line changes its position in metres.
    await bench.dragItem("detectors", "D1", 160, 200);
    expect(await bench.item("detectors", "D1").getAttribute("data-at")).toBe("4");
    expect(await bench.item("signals", "S1").getAttribute("data-at")).toBe("10");
    expect(await bench.item("detectors", "D5").getAttribute("data-at")).toBe("7.3");
    await page.screenshot({ path: path.join(ARTIFACTS, "workbench-schematic.png"), fullPage: true });

    await bench.tab("Records");
    await bench.addRecord("node", { Id: "junction", Name: "Junction board" }, ["D1", "D2", "D3", "D4", "D5", "S1", "S2", "P1"]);
    await bench.save();

    const engineer = await t.signIn("engineer");
    const stored = (await engineer.get(`/api/layouts/${SLUG}`)).body.layout;
    expect(stored.detectors.map((d: { id: string; line: string; at: number }) => `${d.id}@${d.line}:${d.at}`)).toEqual(["D1@main:4", "D2@main:10", "D3@main:14", "D4@branch:1.3", "D5@branch:7.3"]);
    expect(stored.points).toEqual([expect.objectContaining({ id: "P1", line: "main", at: 11.3 })]);
    expect(stored.schematic.version).toBe(2);
    expect(stored.nodes[0]).toMatchObject({ id: "junction", detectors: ["D1", "D2", "D3", "D4", "D5"], signals: ["S1", "S2"] });
  }, 90_000);

  it("makes a converging junction from the template, proves and publishes it", async () => {
    await effort.click(page.getByRole("link", { name: "New junction from a template" }));
    const wizard = new JunctionWizardPage(page, effort);
    await wizard.pick("Converging, in priority order");
    // The roles were guessed from the positions: main D1 → S1/D2 → D3, branch D4 → S2/D5 → D3.
    await wizard.generate();
    const sentences = await wizard.rules().allTextContents();
    expect(sentences.some((s) => s.includes("When a wheelset passes D1: add 1 to mainApproach."))).toBe(true);
    expect(sentences.some((s) => s.includes("show clear on S1"))).toBe(true);
    const version = await wizard.saveDraft();
    expect(await wizard.prove(version)).toMatch(/^Proved/);
    await wizard.publish(version);
    await page.screenshot({ path: path.join(ARTIFACTS, "workbench-published.png"), fullPage: true });
  }, 120_000);

  it("runs live: a pulse from a test board clears the main signal on the mimic", async () => {
    const engineer = await t.signIn("engineer");
    const res = await engineer.post(`/api/layouts/${SLUG}/nodes`).send({ id: "junction", name: "Junction board", detectors: ["D1", "D2", "D3", "D4", "D5"], signals: ["S1", "S2"], points: ["P1"] });
    expect(res.status).toBe(201);
    board = await connectBoard(live.mqttUrl, SLUG, "junction", res.body.secret);
    await board.publish(`blocklight/v1/${SLUG}/node/junction/status`, JSON.stringify({ online: true, boot: board.boot, fw: "1.0.0" }));

    await effort.click(page.getByRole("link", { name: "Open the live mimic" }));
    const livePage = new LivePage(page, live.httpUrl);
    await page.locator('[data-connection="live"]').first().waitFor();
    expect(await livePage.aspectOf("S1")).toBe("danger");
    await board.pulse("D1");
    await livePage.waitForAspect("S1", "clear");
    expect(await livePage.signal("S1").getAttribute("aria-label")).toMatch(/^Signal S1, Signal S1: clear$/);
    await livePage.screenshot(path.join(ARTIFACTS, "workbench-live.png"));
    // For the closing note: what it took a person, as clicks and seconds in the browser.
    console.info(`workbench: ${effort.clicks} clicks, ${effort.fields} fields filled, ${effort.elapsedS().toFixed(1)} s from an empty layout to a live junction`);
  }, 60_000);
});
