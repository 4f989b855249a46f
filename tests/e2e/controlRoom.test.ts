/**
 * The control room in a real browser: the real server (API, socket.io, built client from
 * dist/), the embedded broker and the live runtime in-process; pulses sent as real MQTT
 * messages with a node's credentials. Needs `npx vite build` first (CI runs `npm run build`).
 */
import fs from "node:fs";
import path from "node:path";
import type { Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startAlarmWatchers, type AlarmWatchers } from "../../server/features/alarms/watchRunner";
import { startMailer } from "../../server/features/mail/service";
import { DEMO_PASSWORD, demoEmail } from "../../server/db/seed/demo";
import { connectBoard, startLiveHarness, type Board, type LiveHarness } from "../support/live";
import { startTestApp, type TestApp } from "../support/testApp";
import { AlarmsPage } from "./pages/AlarmsPage";
import { ARTIFACTS, chromiumAvailable, openBrowser } from "./pages/browser";
import { DisplayLinksPage } from "./pages/DisplayLinksPage";
import { DisplayPage } from "./pages/DisplayPage";
import { LivePage } from "./pages/LivePage";
import { LoginPage } from "./pages/LoginPage";
import { MembersPage } from "./pages/MembersPage";

const SLUG = "kestrel-bank";
/** Short enough for a test to wait for: a counter left above 0 this long with no movement. */
const STUCK_AFTER_MS = 2_500;
const built = fs.existsSync(path.resolve("dist/index.html"));

describe.skipIf(!built || !chromiumAvailable())("control room in the browser", () => {
  let t: TestApp;
  let live: LiveHarness;
  let watchers: AlarmWatchers;
  let boards: Record<string, Board>;
  let browser: Awaited<ReturnType<typeof openBrowser>>;
  let page: Page;

  beforeAll(async () => {
    fs.mkdirSync(ARTIFACTS, { recursive: true });
    t = await startTestApp({ config: { serveClient: true } });
    live = await startLiveHarness(t);
    t.deps.mail = await startMailer(t.deps);
    watchers = startAlarmWatchers(t.deps, { config: { stuckAfterMs: STUCK_AFTER_MS }, tickMs: 200 });
    const engineer = await t.signIn("engineer");
    boards = {};
    for (const node of [
      { id: "bank-foot", name: "Bank foot board", detectors: ["MA"], signals: [] },
      { id: "junction", name: "Junction board", detectors: ["ME", "JX"], signals: ["M1"] },
      { id: "quarry", name: "Quarry board", detectors: ["BA", "BE"], signals: ["B1"] },
    ]) {
      const res = await engineer.post(`/api/layouts/${SLUG}/nodes`).send(node);
      boards[node.id] = await connectBoard(live.mqttUrl, SLUG, node.id, res.body.secret);
      await boards[node.id].publish(`blocklight/v1/${SLUG}/node/${node.id}/status`, JSON.stringify({ online: true, boot: boards[node.id].boot, fw: "1.0.0" }));
    }
    browser = await openBrowser();
    page = await browser.context.newPage();
    await new LoginPage(page, live.httpUrl).signIn(demoEmail("signaller"), DEMO_PASSWORD);
  });

  afterAll(async () => {
    await browser?.close();
    await t?.deps.mail?.close();
    watchers?.stop();
    for (const board of Object.values(boards ?? {})) await board.end();
    await live?.close();
    await t?.close();
  });

  it("shows every signal and detector of the layout with its aspect and accessible name", async () => {
    const livePage = new LivePage(page, live.httpUrl);
    await livePage.open(SLUG);
    expect(await livePage.aspectOf("M1")).toBe("danger");
    expect(await livePage.signal("M1").getAttribute("aria-label")).toBe("Signal M1, Main home: danger");
    for (const d of ["MA", "ME", "JX", "BA", "BE"]) expect(await livePage.detector(d).count()).toBe(1);
  });

  it("clears M1 when a main-line train's first axle crosses MA (a real MQTT pulse)", async () => {
    const livePage = new LivePage(page, live.httpUrl);
    await boards["bank-foot"].pulse("MA");
    await livePage.waitForAspect("M1", "clear");
    expect(await livePage.signal("M1").getAttribute("aria-label")).toBe("Signal M1, Main home: clear");
    expect(Number(await livePage.detector("MA").getAttribute("data-pulses"))).toBeGreaterThan(0);
    await livePage.screenshot(path.join(ARTIFACTS, "live-page.png"));
  });

  it("raises a stuck alarm when the approach count stays up with no movement, and it can be acknowledged", async () => {
    const livePage = new LivePage(page, live.httpUrl);
    await livePage.alarmBanner().waitFor({ timeout: STUCK_AFTER_MS + 10_000 });
    expect(await livePage.alarmBanner().textContent()).toContain("mainApproach");
    await livePage.screenshot(path.join(ARTIFACTS, "live-page-alarm.png"));

    const alarms = new AlarmsPage(page, live.httpUrl);
    await alarms.open(SLUG);
    await alarms.alarmsOfKind("stuck").first().waitFor();
    await alarms.acknowledgeFirst("stuck", "Checked the bank: the train is standing at M1");
    await page.screenshot({ path: path.join(ARTIFACTS, "alarms-page.png"), fullPage: true });
    const admin = await t.signIn("admin");
    const res = await admin.get(`/api/layouts/${SLUG}/alarms?state=all`);
    const stuck = res.body.alarms.find((a: { kind: string }) => a.kind === "stuck");
    expect(stuck.acknowledgedBy).toBe("Fernmoor Signaller");
    expect(stuck.comment).toBe("Checked the bank: the train is standing at M1");
  });

  it("the simulator draws the same mimic", async () => {
    await page.goto(`${live.httpUrl}/layouts/${SLUG}/simulate`);
    await page.locator('svg [data-signal="M1"]').waitFor();
    expect(await page.locator("svg [data-detector]").count()).toBe(7);
    await page.screenshot({ path: path.join(ARTIFACTS, "simulator.png"), fullPage: true });
  });

  it("holds a signal at danger with a reason, and the audit log shows who and why", async () => {
    const livePage = new LivePage(page, live.httpUrl);
    await livePage.open(SLUG);
    await livePage.waitForAspect("M1", "clear");
    await livePage.command("Hold M1", "Shunt into the quarry siding", "Hold M1");
    await livePage.waitForAspect("M1", "danger");
    expect(await livePage.signal("M1").getAttribute("data-held")).toBe("true");
    await livePage.screenshot(path.join(ARTIFACTS, "live-page-held.png"));

    const viewer = await t.signIn("viewer");
    const audit = await viewer.get(`/api/layouts/${SLUG}/audit`);
    const hold = audit.body.entries.find((e: { action: string }) => /hold/.test(e.action));
    expect(hold).toMatchObject({ user: "Fernmoor Signaller", reason: "Shunt into the quarry siding" });
  });

  it("opens a display link in a fresh browser with the mimic and no controls", async () => {
    const admin = await t.signIn("admin");
    const made = await admin.post(`/api/layouts/${SLUG}/display-links`).send({ label: "Open day screen" });
    expect(made.status).toBe(201);
    // Nothing about people goes to a display: the acknowledged alarm (with its name) stays out.
    const asVisitor = await fetch(`${live.httpUrl}/api/layouts/${SLUG}/live?display=${made.body.token}`).then((r) => r.json());
    expect(asVisitor.alarms).toEqual([]);
    expect(JSON.stringify(asVisitor)).not.toContain("Fernmoor Signaller");
    const visitor = await openBrowser({ width: 1920, height: 1080 });
    try {
      const visitorPage = await visitor.context.newPage();
      const display = new DisplayPage(visitorPage, live.httpUrl);
      await display.open(made.body.token);
      expect(await display.signal("M1").getAttribute("data-aspect")).toBe("danger"); // still held
      expect(await display.controls().count()).toBe(0);
      // Live on the display too: release the hold and watch M1 clear.
      const signaller = await t.signIn("signaller");
      const released = await signaller.post(`/api/layouts/${SLUG}/commands`).send({ type: "release", signal: "M1", reason: "Shunt finished" });
      expect(released.status).toBe(200);
      await visitorPage.locator('svg [data-signal="M1"][data-aspect="clear"]').waitFor();
      expect(await visitorPage.getByText("Fernmoor Signaller").count()).toBe(0);
      await display.screenshot(path.join(ARTIFACTS, "display.png"));
    } finally {
      await visitor.close();
    }
  });

  it("lets an admin invite a member through the members page and read the mail in the outbox", async () => {
    const admin = await openBrowser();
    try {
      const adminPage = await admin.context.newPage();
      await new LoginPage(adminPage, live.httpUrl).signIn(demoEmail("admin"), DEMO_PASSWORD, "/admin/members");
      const members = new MembersPage(adminPage);
      await members.invite("new.maintainer@fernmoor.example", "maintainer");
      await adminPage.goto(`${live.httpUrl}/admin/outbox`);
      const mail = adminPage.locator("[data-mail]", { hasText: "new.maintainer@fernmoor.example" });
      await mail.first().waitFor();
      expect(await mail.first().textContent()).toMatch(/\/invite\/[A-Za-z0-9_-]+/);
      await adminPage.screenshot({ path: path.join(ARTIFACTS, "outbox.png"), fullPage: true });
    } finally {
      await admin.close();
    }
  });

  it("an admin makes and revokes a display link in the page; the open display then says it is no longer in use", async () => {
    const admin = await openBrowser();
    const visitor = await openBrowser({ width: 1280, height: 720 });
    try {
      const adminPage = await admin.context.newPage();
      await new LoginPage(adminPage, live.httpUrl).signIn(demoEmail("admin"), DEMO_PASSWORD);
      const links = new DisplayLinksPage(adminPage, live.httpUrl);
      await links.open(SLUG);
      const url = await links.make("Clubroom window");
      expect(url).toMatch(/\/display\/[A-Za-z0-9_-]+$/);

      const visitorPage = await visitor.context.newPage();
      await visitorPage.goto(url);
      await visitorPage.locator('svg [data-signal="M1"]').waitFor();
      expect(await new DisplayPage(visitorPage, live.httpUrl).controls().count()).toBe(0);

      await links.revoke("Clubroom window");
      await visitorPage.locator('[data-display-gone="true"]').waitFor({ timeout: 15_000 });
      expect(await visitorPage.locator("svg [data-signal]").count()).toBe(0);
    } finally {
      await visitor.close();
      await admin.close();
    }
  });
});
