/**
 * The alarm watchers on the real pipeline: real broker, runtime, database and MQTT boards.
 * Alarms are grouped by kind and subject with a count; pulses are timed by the board's own
 * clock (`t`); node-offline waits for its delay, on a ManualClock the runtime and the watchers
 * share (the delay passes when the test moves it, not in real time).
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import { startAlarmWatchers, type AlarmWatchers } from "../../server/features/alarms/watchRunner";
import { connectBoard, issueBoardSecrets, KESTREL_BOARDS, onManualClock, startLiveHarness, waitFor, type Board, type LiveHarness } from "../support/live";
import { ManualClock } from "../support/manualClock";
import { startTestApp, type TestApp } from "../support/testApp";

const SLUG = "kestrel-bank";
const NODE_OFFLINE_AFTER_MS = 2_000;

interface Row {
  kind: string;
  subject: string;
  occurrences: number;
  message: string;
  cleared: boolean;
}

describe("alarm watchers on the live pipeline", () => {
  let t: TestApp;
  let live: LiveHarness;
  let watchers: AlarmWatchers;
  let junction: Board;
  let bankFoot: Board;
  const clock = new ManualClock();

  const alarms = (kind: string) =>
    t.deps.db.sequelize.query<Row>(
      `SELECT a.kind, a.subject, a.occurrences, a.message, a.cleared_at IS NOT NULL AS cleared FROM alarms a JOIN layouts l ON l.id = a.layout_id
        WHERE l.slug = :slug AND a.kind = :kind ORDER BY a.id`,
      { replacements: { slug: SLUG, kind }, type: QueryTypes.SELECT },
    );
  let pulsesSent = 0;
  /** A pulse with the board's clock (`t`, ms since this boot). */
  const pulseAt = async (board: Board, node: string, detector: string, t: number) => {
    board.seq++;
    pulsesSent++;
    await board.publish(`blocklight/v1/${SLUG}/node/${node}/pulse`, JSON.stringify({ detector, seq: board.seq, boot: board.boot, t }));
  };
  const pulsesStored = async () =>
    Number(
      (
        await t.deps.db.sequelize.query<{ n: string }>(
          `SELECT count(*) AS n FROM events e JOIN layouts l ON l.id = e.layout_id WHERE l.slug = :slug AND e.kind = 'pulse'`,
          { replacements: { slug: SLUG }, type: QueryTypes.SELECT },
        )
      )[0].n,
    );
  /** The broker's PUBACK says nothing of the server: wait until every pulse sent is stored, then for the watchers. */
  const settle = async () => {
    await waitFor(async () => (await pulsesStored()) >= pulsesSent, "every pulse sent stored by the server");
    await live.runtime.idle();
    await watchers.idle();
  };
  /** Moves the clock of the runtime and the watchers, letting each timer's work finish before the next. */
  const advance = (ms: number) =>
    clock.advance(ms, async () => {
      await live.runtime.idle();
      await watchers.idle();
    });
  const junctionOnline = async () => (await live.runtime.liveState(SLUG)).nodes.junction?.online;

  beforeAll(async () => {
    t = await startTestApp();
    live = await startLiveHarness(t, onManualClock(clock));
    watchers = startAlarmWatchers(t.deps, { settings: { nodeOfflineAfterMs: NODE_OFFLINE_AFTER_MS }, clock });
    const secrets = await issueBoardSecrets(t, SLUG, [KESTREL_BOARDS.junction, KESTREL_BOARDS.bankFoot]);
    junction = await connectBoard(live.mqttUrl, SLUG, "junction", secrets.get("junction")!);
    bankFoot = await connectBoard(live.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!);
  });

  afterAll(async () => {
    await junction?.end();
    await bankFoot?.end();
    await watchers?.stop();
    await live?.close();
    await t?.close();
  });

  it("a burst received together but 640 ms apart on the board raises no chatter", async () => {
    // Published back to back: the server receives them within a few ms of each other.
    for (let i = 0; i < 8; i++) await pulseAt(junction, "junction", "JX", 10_000 + i * 640);
    await settle();
    expect(await alarms("chatter")).toEqual([]);
  });

  it("an irregular chattering detector is one alarm with a count, not one per pulse", async () => {
    const gaps = [3, 11, 7, 19, 5, 13, 2, 17, 9, 23];
    let boardT = 100_000;
    await pulseAt(bankFoot, "bank-foot", "MA", boardT);
    for (const gap of gaps) await pulseAt(bankFoot, "bank-foot", "MA", (boardT += gap));
    await settle();
    const rows = await alarms("chatter");
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({ subject: "MA", occurrences: gaps.length, cleared: false });
    expect(rows[0].message).toContain("23 ms apart");
    const state = await live.runtime.liveState(SLUG);
    expect(state.alarms.filter((a) => a.kind === "chatter").map((a) => [a.subject, a.occurrences])).toEqual([["MA", gaps.length]]);
  });

  it("a node offline is raised after its delay and cleared when it is back", async () => {
    await junction.publish(`blocklight/v1/${SLUG}/node/junction/status`, JSON.stringify({ online: false, boot: junction.boot }));
    await waitFor(async () => (await junctionOnline()) === false, "the offline status applied");
    await settle();
    await advance(NODE_OFFLINE_AFTER_MS - 100);
    expect(await alarms("node-offline")).toEqual([]);
    await advance(200);
    expect(await alarms("node-offline")).toMatchObject([{ subject: "junction", cleared: false }]);
    await junction.publish(`blocklight/v1/${SLUG}/node/junction/status`, JSON.stringify({ online: true, boot: junction.boot }));
    await waitFor(async () => (await alarms("node-offline"))[0]?.cleared === true, "the node-offline alarm to clear");
  });

  it("settings change at run time", async () => {
    watchers.setSettings(SLUG, { chatterMinGapMs: 1_000 });
    expect(watchers.settingsOf(SLUG).chatterMinGapMs).toBe(1_000);
    expect(watchers.settingsOf(SLUG).nodeOfflineAfterMs).toBe(2_000);
    // 640 ms apart is chatter now: the open MA alarm is not touched, JX gets its own.
    for (let i = 0; i < 3; i++) await pulseAt(junction, "junction", "JX", 50_000 + i * 640);
    await settle();
    expect((await alarms("chatter")).map((r) => [r.subject, r.occurrences])).toEqual([
      ["MA", 10],
      ["JX", 2],
    ]);
  });
});
