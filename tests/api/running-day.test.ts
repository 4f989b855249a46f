/**
 * Running-day control on the real live runtime (real broker, a real MQTT board): alarm
 * settings per layout (engineer edits, everyone signed in reads, bad values refused, changes
 * announced at once), the board roll call's alarm for boards that never connected, and
 * starting and ending a session from the live page with a note.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { AlarmSettingsResponse } from "@shared/contract/alarmSettings";
import type { SessionListResponse } from "@shared/contract/sessions";
import { rollCall } from "../../server/features/alarms/boardRollCall";
import { connectBoard, issueBoardSecrets, KESTREL_BOARDS, startLiveHarness, waitFor, type Board, type LiveHarness } from "../support/live";
import { startTestApp, type TestApp } from "../support/testApp";

const SLUG = "kestrel-bank";
const SETTINGS = `/api/layouts/${SLUG}/alarm-settings`;

describe("running day: alarm settings, board roll call, session control", () => {
  let t: TestApp;
  let h: LiveHarness;
  let board: Board;

  beforeAll(async () => {
    t = await startTestApp();
    h = await startLiveHarness(t);
    const secrets = await issueBoardSecrets(t, SLUG, [KESTREL_BOARDS.bankFoot, KESTREL_BOARDS.junction, KESTREL_BOARDS.quarry]);
    board = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!);
    await board.publish(`blocklight/v1/${SLUG}/node/bank-foot/status`, JSON.stringify({ online: true, boot: board.boot }));
  });
  afterAll(async () => {
    await board?.end();
    await h?.close();
    await t?.close();
  });

  it("reads the defaults, stores what an engineer changes, and announces it", async () => {
    const viewer = await t.signIn("viewer");
    const first = (await viewer.get(SETTINGS)).body as AlarmSettingsResponse;
    expect(first.changed).toEqual([]);
    expect(first.settings).toEqual(first.defaults);
    expect(first.defaults.stuckAfterMs).toBe(600_000);

    const announced: unknown[] = [];
    t.deps.bus.on("alarm-settings.changed", (e) => announced.push(e));
    const engineer = await t.signIn("engineer");
    const res = await engineer.put(SETTINGS).send({ stuckAfterMs: 90_000, boardConnectWithinMs: 1_000 });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body).toMatchObject({ changed: ["stuckAfterMs", "boardConnectWithinMs"], settings: { stuckAfterMs: 90_000, boardConnectWithinMs: 1_000, chatterMinGapMs: 40 } });
    expect(res.body.updatedBy).toBeTruthy();
    expect(announced).toEqual([expect.objectContaining({ slug: SLUG, settings: expect.objectContaining({ stuckAfterMs: 90_000 }) })]);
    expect(((await viewer.get(SETTINGS)).body as AlarmSettingsResponse).settings.stuckAfterMs).toBe(90_000);
  });

  it.each([
    [{ stuckAfterMs: 10 }, "$.stuckAfterMs"],
    [{ stuckAfterMs: 1.5e3 + 0.5 }, "$.stuckAfterMs"],
    [{ chatterMinGapMs: "40" }, "$.chatterMinGapMs"],
    [{ tooLoud: 1 }, "$"],
  ])("refuses %j and changes nothing", async (body, path) => {
    const engineer = await t.signIn("engineer");
    const res = await engineer.put(SETTINGS).send(body);
    expect(res.status).toBe(400);
    expect(res.body.error.details.map((d: { path: string }) => d.path)).toContain(path);
    expect(((await engineer.get(SETTINGS)).body as AlarmSettingsResponse).settings.stuckAfterMs).toBe(90_000);
  });

  it("puts a setting back to its default with null", async () => {
    const engineer = await t.signIn("engineer");
    const res = await engineer.put(SETTINGS).send({ stuckAfterMs: null });
    expect(res.body.changed).toEqual(["boardConnectWithinMs"]);
    expect(res.body.settings.stuckAfterMs).toBe(600_000);
  });

  it("starts a session with a note, alarms for the boards that never connected, ends it with a note", async () => {
    const signaller = await t.signIn("signaller");
    const closeFirst = await signaller.post(`/api/layouts/${SLUG}/sessions`).send({ action: "close" });
    expect(closeFirst.status).toBe(200);
    const opened = await signaller.post(`/api/layouts/${SLUG}/sessions`).send({ action: "open", note: "Open day, three trains" });
    expect(opened.status, JSON.stringify(opened.body)).toBe(200);
    const sessionId = opened.body.session.id as number;

    // Within the wait, no alarm; after it, one per board that has not been online since.
    expect(await rollCall(t.deps, Date.parse(opened.body.session.openedAt) + 500)).toBe(0);
    await waitFor(async () => (await rollCall(t.deps)) > 0, "the roll call", 5_000);
    const alarms = (await signaller.get(`/api/layouts/${SLUG}/alarms`)).body.alarms as { kind: string; subject: string; message: string }[];
    const missing = alarms.filter((a) => a.kind === "node-offline" && a.message.includes("has not connected")).map((a) => a.subject).sort();
    expect(missing).toEqual(["junction", "quarry", "shed"]);

    const closed = await signaller.post(`/api/layouts/${SLUG}/sessions`).send({ action: "close", note: "Last train stabled" });
    expect(closed.status).toBe(200);
    const list = (await signaller.get(`/api/layouts/${SLUG}/sessions`)).body as SessionListResponse;
    const row = list.sessions.find((s) => s.id === sessionId)!;
    expect(row).toMatchObject({ openedBy: expect.any(String), closedBy: expect.any(String), note: "Opened: Open day, three trains\nClosed: Last train stabled" });
    expect(row.closedAt).not.toBeNull();
  });

  it("refuses a note that is too long", async () => {
    const signaller = await t.signIn("signaller");
    const res = await signaller.post(`/api/layouts/${SLUG}/sessions`).send({ action: "open", note: "x".repeat(501) });
    expect(res.status).toBe(400);
  });
});
