/**
 * Power-worked points live, end to end (CONTRACT.md §2): real broker, PostgreSQL and reference
 * boards on the Wrenfold Loop demo (facing junction, P2 power-worked). A train over the through
 * road, then the next one: the rulebook throws P2 reverse → a retained `…/points/P2/set` →
 * the points board reports moving, then reverse (numbered with its pulses) → the engine state
 * and the live state say so, and W1 clears for the loop. A points board whose motor never moves
 * raises a "points-detection" alarm.
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import { DEMO_PASSWORD, demoEmail } from "../../server/db/seed/demo";
import { startTestApp, type TestApp } from "../support/testApp";
import { connectBoard, connectBrowser, join, onManualClock, startLiveHarness, waitFor, type Board, type LiveHarness } from "../support/live";
import { ManualClock } from "../support/manualClock";
import { registerWrenfoldBoards } from "../fixtures/wrenfoldBoards";

const SLUG = "wrenfold-loop";
const DETECTION_MS = 1_500;

describe("live power points", () => {
  let t: TestApp;
  let h: LiveHarness;
  let secrets = new Map<string, string>();
  let cookie = "";
  const boards: Board[] = [];
  // The server's clock moves by hand: the detection check falls due when the test says, however slow the board.
  const clock = new ManualClock();
  const advance = (ms: number) => clock.advance(ms, () => h.runtime.idle());
  const detectionAlarm = async () => {
    const res = await request(t.app).get(`/api/layouts/${SLUG}/alarms?state=open`).set("Cookie", cookie);
    return res.body.alarms.some((a: { kind: string; subject: string }) => a.kind === "points-detection" && a.subject === "P2");
  };

  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
    t.deps.db.sequelize.query<T>(sql, { type: QueryTypes.SELECT, replacements });
  const live = async () => (await request(t.app).get(`/api/layouts/${SLUG}/live`).set("Cookie", cookie)).body;

  beforeAll(async () => {
    t = await startTestApp();
    h = await startLiveHarness(t, onManualClock(clock, { pointsDetectionMs: DETECTION_MS }));
    secrets = await registerWrenfoldBoards(t);
    const login = await request(t.app).post("/api/auth/login").send({ email: demoEmail("signaller"), password: DEMO_PASSWORD });
    cookie = (login.headers["set-cookie"] as unknown as string[]).map((c) => c.split(";")[0]).join("; ");
  });
  afterAll(async () => {
    for (const b of boards) await b.end();
    await h?.close();
    await t?.close();
  });

  it("a throw → retained set → the board reports moving, then reverse → engine and live state; W1 clears for the loop", async () => {
    const home = await connectBoard(h.mqttUrl, SLUG, "wrenfold-home", secrets.get("wrenfold-home")!, { signals: ["W1"] });
    const points = await connectBoard(h.mqttUrl, SLUG, "loop-points", secrets.get("loop-points")!, { drives: ["P2"], pointsMoveMs: 300 });
    const end = await connectBoard(h.mqttUrl, SLUG, "loop-end", secrets.get("loop-end")!);
    boards.push(home, points, end);
    const browser = await connectBrowser(h.httpUrl, cookie);
    expect((await join(browser.socket, SLUG)).ok).toBe(true);

    // The points board says where the points lie at power-up, then a train takes the through road.
    await points.board.pointsReport("P2", "normal");
    await home.pulse("WA");
    await waitFor(() => home.shown.get("W1") === "clear", "W1 clear for the through road");
    await home.pulse("WE");
    await points.pulse("TX");
    await end.pulse("TZ");
    // The next train: the loop road's turn, so the rules throw P2 reverse.
    await waitFor(() => home.shown.get("W1") === "danger", "W1 back at danger behind the train");
    const revBefore = home.aspects.get("W1")!.rev;
    await home.pulse("WA");
    await waitFor(() => points.board.pointsSet.get("P2")?.to === "reverse", "the set command at the points board");
    const set = points.board.pointsSet.get("P2")!;
    expect(set.rev).toBeGreaterThan(revBefore); // one rev counter for the layout's commands
    expect(Number.isNaN(Date.parse(set.at))).toBe(false);
    await waitFor(() => home.shown.get("W1") === "clear", "W1 clear for the loop once P2 lies reverse");
    expect(points.board.lies.get("P2")).toBe("reverse");

    // What the engine saw, in the board's seq order with its pulse: moving, then reverse.
    await waitFor(async () => (await q(`SELECT 1 FROM events WHERE kind = 'points' AND input->>'lies' = 'reverse'`)).length > 0, "the reverse report stored");
    const reports = await q<{ lies: string; seq: number; status: string }>(
      `SELECT input->>'lies' AS lies, seq, status FROM events WHERE kind = 'points' AND node_id = 'loop-points' ORDER BY seq`,
    );
    expect(reports.map((r) => [r.lies, r.status])).toEqual([
      ["normal", "accepted"],
      ["moving", "accepted"],
      ["reverse", "accepted"],
    ]);
    const pulseSeq = (await q<{ seq: number }>(`SELECT seq FROM events WHERE kind = 'pulse' AND node_id = 'loop-points'`))[0].seq;
    expect(reports.map((r) => Number(r.seq))).toEqual([1, Number(pulseSeq) + 1, Number(pulseSeq) + 2]);
    const state = await live();
    expect(state).toMatchObject({ points: { P2: "reverse" }, thrown: { P2: "reverse" }, shown: { W1: "clear" } });
    await waitFor(() => browser.updates.some((u) => u.patch.points?.P2 === "moving"), "the moving report pushed to the browser");

    // Retained: a board that connects now still gets the command.
    const late = await connectBoard(h.mqttUrl, SLUG, "loop-end", secrets.get("loop-end")!, { boot: "late01" });
    boards.push(late);
    await waitFor(() => late.board.pointsSet.get("P2")?.rev === set.rev, "the retained set at a board that connects later");
    browser.socket.disconnect();
    // The report came in time: past the detection time no check is left to fail.
    await advance(DETECTION_MS + 100);
    const alarms = (await request(t.app).get(`/api/layouts/${SLUG}/alarms`).set("Cookie", cookie)).body.alarms as { kind: string }[];
    expect(alarms.filter((a) => a.kind === "points-detection")).toEqual([]);
  });

  it("a points board that never reports the points where thrown raises a points-detection alarm", async () => {
    for (const b of boards.splice(0)) await b.end();
    const home = await connectBoard(h.mqttUrl, SLUG, "wrenfold-home", secrets.get("wrenfold-home")!, { signals: ["W1"], boot: "home02" });
    const stuck = await connectBoard(h.mqttUrl, SLUG, "loop-points", secrets.get("loop-points")!, { drives: ["P2"], pointsStuck: true, boot: "stuck02" });
    const end = await connectBoard(h.mqttUrl, SLUG, "loop-end", secrets.get("loop-end")!, { boot: "end02" });
    boards.push(home, stuck, end);
    // The loop train goes through (P2 already reverse), then the through road's turn throws P2 normal.
    await home.pulse("WE");
    await stuck.pulse("LX");
    await end.pulse("LZ");
    await home.pulse("WA");
    await waitFor(() => stuck.board.pointsSet.get("P2")?.to === "normal", "the set command normal");
    await advance(DETECTION_MS - 100);
    expect(await detectionAlarm()).toBe(false); // not yet due
    await advance(200);
    await waitFor(detectionAlarm, "the points-detection alarm");
    // The rulebook never saw P2 lie normal: W1 stays at danger.
    expect(home.shown.get("W1")).toBe("danger");
    expect((await live()).points).toEqual({ P2: "reverse" });
  });
});
