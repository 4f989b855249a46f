/**
 * The running day in a real browser, on a session driven by real MQTT pulses from test
 * boards: honest layout status (a board that never connected, its signal drawn dark), why a
 * signal is at danger after a stray pulse and the command that clears it, starting and ending
 * the day with a note, rejected and duplicate messages marked in the ticker (also after a
 * reload), the day's report with its charts and the check linked to replay, and the alarm
 * settings. Needs `npm run build` first.
 */
import fs from "node:fs";
import path from "node:path";
import type { Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { DEMO_PASSWORD, demoEmail } from "../../server/db/seed/demo";
import { connectBoard, issueBoardSecrets, KESTREL_BOARDS, startLiveHarness, type Board, type LiveHarness } from "../support/live";
import { startTestApp, type TestApp } from "../support/testApp";
import { AlarmSettingsPanel } from "./pages/AlarmSettingsPanel";
import { ARTIFACTS, chromiumAvailable, openBrowser } from "./pages/browser";
import { LivePage } from "./pages/LivePage";
import { LoginPage } from "./pages/LoginPage";
import { ReportPage } from "./pages/ReportPage";
import { RunningDayPanel } from "./pages/RunningDayPanel";

const SLUG = "kestrel-bank";
const built = fs.existsSync(path.resolve("dist/index.html"));
const pulseTopic = (node: string) => `blocklight/v1/${SLUG}/node/${node}/pulse`;

describe.skipIf(!built || !chromiumAvailable())("the running day in the browser", () => {
  let t: TestApp;
  let live: LiveHarness;
  let boards: Record<string, Board>;
  let browser: Awaited<ReturnType<typeof openBrowser>>;
  let page: Page;
  let sessionId = 0;

  beforeAll(async () => {
    fs.mkdirSync(ARTIFACTS, { recursive: true });
    t = await startTestApp({ config: { serveClient: true } });
    live = await startLiveHarness(t);
    // The quarry board is registered but never connects.
    const secrets = await issueBoardSecrets(t, SLUG, [KESTREL_BOARDS.bankFoot, KESTREL_BOARDS.junction, KESTREL_BOARDS.quarry, KESTREL_BOARDS.shed]);
    boards = {};
    for (const id of ["bank-foot", "junction", "shed"]) {
      boards[id] = await connectBoard(live.mqttUrl, SLUG, id, secrets.get(id)!);
      await boards[id].publish(`blocklight/v1/${SLUG}/node/${id}/status`, JSON.stringify({ online: true, boot: boards[id].boot }));
    }
    await live.runtime.idle();
    browser = await openBrowser();
    page = await browser.context.newPage();
    await new LoginPage(page, live.httpUrl).signIn(demoEmail("signaller"), DEMO_PASSWORD);
  });
  afterAll(async () => {
    await browser?.close();
    for (const board of Object.values(boards ?? {})) await board.end();
    await live?.close();
    await t?.close();
  });

  it("says which boards are offline instead of a green light, and draws their signals dark", async () => {
    const livePage = new LivePage(page, live.httpUrl);
    const day = new RunningDayPanel(page);
    await livePage.open(SLUG);
    await day.waitForStatus("boards-offline");
    expect(await day.layoutStatus().innerText()).toContain("1 board of 4 offline: quarry");
    expect(await livePage.aspectOf("B1")).toBe("dark");
    expect(await livePage.aspectOf("M1")).toBe("danger");
    expect(await day.stateRow("B1").innerText()).toContain("offline: lamp unknown");
    expect(await page.getByRole("navigation", { name: "Main" }).getByRole("button", { name: /restart/i }).count()).toBe(0);
  });

  it("starts the running day with a note", async () => {
    const day = new RunningDayPanel(page);
    if ((await day.sessionState().getAttribute("data-session-state")) === "open") await day.startOrEndDay("End running day", "closing the day before");
    await day.startOrEndDay("Start running day", "Open day on the bank");
    const text = await day.sessionState().innerText();
    sessionId = Number(/Session #(\d+)/.exec(text)?.[1]);
    expect(sessionId).toBeGreaterThan(0);
  });

  it("explains why M1 stays at danger after a stray pulse, and the command that clears it", async () => {
    const livePage = new LivePage(page, live.httpUrl);
    const day = new RunningDayPanel(page);
    await boards.junction.pulse("ME"); // stray: nothing is in the junction
    await boards["bank-foot"].pulse("MA");
    await boards["bank-foot"].pulse("MA");
    await live.runtime.idle();
    await page.waitForTimeout(300);
    expect(await livePage.aspectOf("M1")).toBe("danger");
    const why = await day.whyAtDanger("M1");
    expect(why).toContain("give-main");
    expect(why).toContain("junction is 1");
    await day.fixButton("M1", "Zero junction").click();
    const dialog = page.getByRole("dialog");
    await dialog.getByLabel(/reason/i).fill("stray pulse at ME");
    await dialog.getByRole("button", { name: "Zero junction", exact: true }).click();
    await livePage.waitForAspect("M1", "clear");
  });

  it("marks rejected and duplicate messages in the ticker, and keeps them after a reload", async () => {
    const day = new RunningDayPanel(page);
    const b = boards["bank-foot"];
    await b.publish(pulseTopic("bank-foot"), JSON.stringify({ detector: "MA", seq: b.seq, boot: b.boot }));
    await b.publish(pulseTopic("bank-foot"), JSON.stringify({ detector: "JX", seq: b.seq + 1, boot: b.boot }));
    await live.runtime.idle();
    await day.tickerRows("duplicate").first().waitFor();
    await day.tickerRows("rejected").first().waitFor();
    await page.reload();
    await day.tickerRows("rejected").first().waitFor();
    expect(await day.tickerRows("accepted").count()).toBeGreaterThan(3);
    expect(await page.getByText("Waiting for the first event").count()).toBe(0);
  });

  it("ends the day and shows its report: the check, the timelines, the board that never came", async () => {
    for (const d of ["ME", "ME", "JX", "JX"]) await boards.junction.pulse(d);
    await live.runtime.idle();
    const day = new RunningDayPanel(page);
    await day.startOrEndDay("End running day", "Last train up the bank");

    const report = new ReportPage(page, live.httpUrl);
    await report.open(SLUG, sessionId);
    expect(await report.prioritySummary().innerText()).toMatch(/checked 1 time with the junction free/);
    expect(await report.checks().count()).toBe(1);
    expect(await report.checks().first().innerText()).toContain("junction = 1");
    expect(await report.routeRow("main").innerText()).toMatch(/main \(priority\)\s+M1\s+1\s+1/);
    expect(await report.timelineCanvas("M1").count()).toBeGreaterThan(0);
    expect(await report.nodeRow("quarry").innerText()).toContain("never connected");
    expect((await report.scriptsLoaded()).some((s) => s.startsWith("ReportPage-"))).toBe(true);
    // Printed for the clubroom: one sheet.
    const pdf = path.join(ARTIFACTS, "running-day-report.pdf");
    await report.pdf(pdf);
    expect(fs.readFileSync(pdf).toString("latin1").match(/\/Type\s*\/Page[^s]/g)).toHaveLength(1);
    await report.openFirstCheckInReplay();
    expect(page.url()).toMatch(/step=\d+/);
  });

  it("loads the charts only on the report page", async () => {
    const other = await browser.context.newPage();
    await other.goto(`${live.httpUrl}/layouts/${SLUG}/live`);
    await other.locator('[data-connection="live"]').first().waitFor();
    const scripts = await new ReportPage(other, live.httpUrl).scriptsLoaded();
    expect(scripts.some((s) => s.startsWith("ReportPage-"))).toBe(false);
    await other.close();
  });

  it("lets an engineer change the alarm settings, refusing a bad value", async () => {
    const engineerBrowser = await openBrowser();
    try {
      const p = await engineerBrowser.context.newPage();
      await new LoginPage(p, live.httpUrl).signIn(demoEmail("engineer"), DEMO_PASSWORD);
      const settings = new AlarmSettingsPanel(p, live.httpUrl);
      await settings.open(SLUG);
      await settings.save({ "Latch or counter stuck after": "0.5" });
      await settings.fieldError("stuckAfterMs").waitFor();
      await settings.save({ "Latch or counter stuck after": "90" });
      await settings.saved().waitFor();
      const res = await (await t.signIn("viewer")).get(`/api/layouts/${SLUG}/alarm-settings`);
      expect(res.body.settings.stuckAfterMs).toBe(90_000);
    } finally {
      await engineerBrowser.close();
    }
  });
});
