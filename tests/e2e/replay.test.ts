/**
 * Sessions and replay in a real browser: a session made by real MQTT pulses, its event log
 * filtered, replayed on the mimic, and a what-if against a draft that never clears the main
 * signal. Needs `npx vite build` first (CI runs `npm run build`).
 */
import fs from "node:fs";
import path from "node:path";
import type { Page } from "playwright-core";
import { QueryTypes } from "sequelize";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { DEMO_PASSWORD, demoEmail } from "../../server/db/seed/demo";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { connectBoard, startLiveHarness, waitFor, type Board, type LiveHarness } from "../support/live";
import { startTestApp, type TestApp } from "../support/testApp";
import { ARTIFACTS, chromiumAvailable, openBrowser } from "./pages/browser";
import { LoginPage } from "./pages/LoginPage";
import { ReplayPage } from "./pages/ReplayPage";
import { SessionsPage } from "./pages/SessionsPage";

const SLUG = "kestrel-bank";
const built = fs.existsSync(path.resolve("dist/index.html"));

describe.skipIf(!built || !chromiumAvailable())("sessions and replay in the browser", () => {
  let t: TestApp;
  let live: LiveHarness;
  let board: Board;
  let browser: Awaited<ReturnType<typeof openBrowser>>;
  let page: Page;

  beforeAll(async () => {
    fs.mkdirSync(ARTIFACTS, { recursive: true });
    t = await startTestApp({ config: { serveClient: true } });
    live = await startLiveHarness(t);
    const engineer = await t.signIn("engineer");
    const node = await engineer.post(`/api/layouts/${SLUG}/nodes`).send({ id: "bank-foot", name: "Bank foot board", detectors: ["MA"], signals: [] });
    board = await connectBoard(live.mqttUrl, SLUG, "bank-foot", node.body.secret);
    await board.pulse("MA");
    await board.pulse("MA");
    await board.publish(`blocklight/v1/${SLUG}/node/bank-foot/pulse`, JSON.stringify({ detector: "JX", seq: 3, boot: board.boot }));
    const stored = async () => (await t.deps.db.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM events`, { type: QueryTypes.SELECT }))[0].n;
    await waitFor(async () => (await stored()) >= 3, "three stored events");
    await live.runtime.idle();
    // Version 2, a draft that never gives the main line a proceed.
    const rulebook = kestrelBankLayout().rulebook;
    const saved = await engineer.post(`/api/layouts/${SLUG}/rulebooks`).send({ rulebook: { ...rulebook, rules: rulebook.rules.filter((r) => r.id !== "give-main") }, note: "what-if" });
    expect(saved.status).toBe(201);

    browser = await openBrowser();
    page = await browser.context.newPage();
    await new LoginPage(page, live.httpUrl).signIn(demoEmail("maintainer"), DEMO_PASSWORD);
  });

  afterAll(async () => {
    await browser?.close();
    await board?.end();
    await live?.close();
    await t?.close();
  });

  it("shows the session's event log, filters it and offers the downloads", async () => {
    const sessions = new SessionsPage(page, live.httpUrl);
    await sessions.open(SLUG);
    await expect.poll(() => sessions.eventRows().count()).toBe(3);
    await sessions.filter("Status", "rejected");
    await expect.poll(() => sessions.eventRows().count()).toBe(1);
    expect(await sessions.eventRows().first().textContent()).toContain("not served");
    expect(await sessions.downloadLink("CSV").getAttribute("href")).toMatch(/\/api\/sessions\/\d+\/events\?format=csv$/);
    await page.screenshot({ path: path.join(ARTIFACTS, "sessions.png"), fullPage: true });
    await sessions.openReplay();
  });

  it("replays the session on the mimic and marks where a what-if rulebook differs", async () => {
    const replay = new ReplayPage(page);
    await replay.waitForReady();
    expect(await replay.aspectOf("recorded", "M1")).toBe("danger");
    await replay.stepForward();
    await expect.poll(() => replay.aspectOf("recorded", "M1")).toBe("clear");

    await replay.chooseWhatIf(/^v2/);
    await expect.poll(() => replay.whatIfSummary().textContent()).toMatch(/differ at 2 of 2 steps; first at step 1/);
    expect(await replay.aspectOf("what-if", "M1")).toBe("danger");
    expect(await replay.differencesHere().first().textContent()).toBe("M1cleardanger");
    await replay.scrubTo(0);
    await expect.poll(() => replay.differencesHere().count()).toBe(0);
    await replay.scrubTo(1);
    await page.screenshot({ path: path.join(ARTIFACTS, "replay-what-if.png"), fullPage: true });
  });
});
