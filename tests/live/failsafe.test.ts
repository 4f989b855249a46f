/**
 * Fail-safe and bad input (CONTRACT.md §2, duties of the server and the boards' fail-safe):
 * the server's status with heartbeat and Last Will, boards at danger when the server dies and
 * back only on a newer rev, danger within FAILSAFE_AFTER_MS when the database hangs (a row
 * lock held), health and the live state during that outage, and a table of poison payloads
 * that are stored as rejected while the layout goes on. The runner's watchdog runs on a
 * ManualClock: the hung commit is real, the FAILSAFE_AFTER_MS that passes over it is moved by hand.
 */
import pg from "pg";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import { QueryTypes } from "sequelize";
import { topics } from "@shared/contract/live";
import { startTestApp, type TestApp } from "../support/testApp";
import { connectBoard, issueBoardSecrets, KESTREL_BOARDS, onManualClock, startLiveHarness, waitFor, type LiveHarness } from "../support/live";
import { ManualClock } from "../support/manualClock";

const SLUG = "kestrel-bank";
const FAILSAFE_MS = 1_000;

describe("fail-safe and bad input", () => {
  let t: TestApp;
  let h: LiveHarness;
  let secrets = new Map<string, string>();
  let signaller: Awaited<ReturnType<TestApp["signIn"]>>;
  const clock = new ManualClock();
  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
    t.deps.db.sequelize.query<T>(sql, { type: QueryTypes.SELECT, replacements });

  beforeAll(async () => {
    t = await startTestApp();
    h = await startLiveHarness(t, onManualClock(clock, { failsafeAfterMs: FAILSAFE_MS, reorderWaitMs: 500 }));
    secrets = await issueBoardSecrets(t, SLUG, [KESTREL_BOARDS.bankFoot, KESTREL_BOARDS.junction]);
    signaller = await t.signIn("signaller");
  });
  afterAll(async () => {
    await h?.close();
    await t?.close();
  });

  it("server/status: online on start, a heartbeat every second, the Last Will on a crash", async () => {
    // A board hears server/status (CONTRACT.md §2); listen beside the reference board's own handling.
    const board = await connectBoard(h.mqttUrl, SLUG, "junction", secrets.get("junction")!);
    const seen: { online: boolean; at?: string }[] = [];
    board.client.on("message", (topic, payload) => {
      if (topic === topics.serverStatus(SLUG)) seen.push(JSON.parse(payload.toString()));
    });
    await waitFor(() => seen.filter((s) => s.online && s.at).length >= 2, "two heartbeats", 4_000);
    await h.runtime.crash();
    await waitFor(() => seen.some((s) => !s.online), "the Last Will online:false");
    await waitFor(() => board.board.failSafe, "the board in fail-safe");
    await h.startRuntime();
    await waitFor(() => seen[seen.length - 1]?.online === true, "online again");
    await board.end();
  });

  it("a board shows danger while the server is gone and leaves it only on a newer rev", async () => {
    const junction = await connectBoard(h.mqttUrl, SLUG, "junction", secrets.get("junction")!, { signals: ["M1"] });
    const bankFoot = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!);
    await bankFoot.pulse("MA");
    await waitFor(() => junction.shown.get("M1") === "clear", "M1 shown clear");
    const revBefore = junction.aspects.get("M1")!.rev;
    await h.runtime.crash();
    await waitFor(() => junction.shown.get("M1") === "danger", "M1 at danger once the server is gone");
    // The retained command is still clear with its old rev: that alone must not lift danger.
    expect(junction.aspects.get("M1")!.aspect).toBe("clear");
    await h.startRuntime();
    await waitFor(() => junction.shown.get("M1") === "clear", "M1 clear again after the restart");
    expect(junction.aspects.get("M1")!.rev).toBeGreaterThan(revBefore);
    await Promise.all([junction.end(), bankFoot.end()]);
  });

  it("a database that hangs (a row lock held) puts every signal at danger; health and the live state still answer", async () => {
    const junction = await connectBoard(h.mqttUrl, SLUG, "junction", secrets.get("junction")!, { signals: ["M1"] });
    const bankFoot = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!);
    await waitFor(() => junction.shown.get("M1") === "clear", "M1 clear before the lock");
    const locker = new pg.Client({ connectionString: inject("pgAdminUrl").replace(/\/postgres$/, `/${t.deps.db.sequelize.config.database}`) });
    await locker.connect();
    await locker.query("BEGIN");
    await locker.query(`SELECT id FROM layouts WHERE slug = $1 FOR UPDATE`, [SLUG]);
    try {
      await bankFoot.pulse("MA"); // its commit waits on the lock
      await waitFor(() => h.runtime.pendingAcks() === 1, "the pulse received, its commit waiting on the lock");
      await clock.advance(FAILSAFE_MS - 100); // nothing settles while the commit hangs
      expect(h.runtime.health()[SLUG]).toBe("live");
      await clock.advance(200);
      expect(h.runtime.health()[SLUG]).toBe("fail-safe");
      await waitFor(() => junction.shown.get("M1") === "danger", "M1 at danger while the commit hangs");
      const health = await request(t.app).get("/api/health");
      expect(health.status).toBe(503);
      expect(health.body.layouts[SLUG]).toBe("fail-safe");
      const live = await signaller.get(`/api/layouts/${SLUG}/live`);
      expect(live.status).toBe(200);
      expect(live.body.stale).toBe(true);
      expect(live.body.shown.M1).toBe("danger");
    } finally {
      await locker.query("ROLLBACK");
      await locker.end();
    }
    await waitFor(() => junction.shown.get("M1") === "clear", "M1 clear once commits go through", 15_000);
    await waitFor(async () => (await request(t.app).get("/api/health")).status === 200, "health back to 200");
    await Promise.all([junction.end(), bankFoot.end()]);
  });

  const pulseTopic = topics.pulse(SLUG, "bank-foot");
  const statusTopic = topics.status(SLUG, "bank-foot");
  it.each([
    ["a NUL in boot", pulseTopic, JSON.stringify({ detector: "MA", seq: 1, boot: "poi\u0000son" })],
    ["binary garbage", pulseTopic, Buffer.from([0x00, 0xff, 0xfe, 0x9c, 0x00, 0x7b])],
    ["bytes that are not UTF-8 inside JSON", pulseTopic, Buffer.concat([Buffer.from('{"detector":"MA","seq":1,"boot":"'), Buffer.from([0xc3, 0x28]), Buffer.from('"}')])],
    ["a NUL in fw", statusTopic, JSON.stringify({ online: true, boot: "fwnul", fw: "1.\u00000" })],
    ["a seq of 2^53", pulseTopic, JSON.stringify({ detector: "MA", seq: 2 ** 53, boot: "huge" })],
    ["a seq past the contract's bound", pulseTopic, JSON.stringify({ detector: "MA", seq: 2 ** 31, boot: "huge2" })],
    ["a number too large for JSON", pulseTopic, '{"detector":"MA","seq":1e400,"boot":"inf"}'],
    ["a lone surrogate in boot", pulseTopic, JSON.stringify({ detector: "MA", seq: 1, boot: "\ud800x" })],
    ["a seq far ahead of its boot", pulseTopic, JSON.stringify({ detector: "MA", seq: 5_000_000, boot: "ahead" })],
  ])("%s is stored as rejected and the layout goes on", async (_name, topic, payload) => {
    const board = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!);
    await h.runtime.idle();
    const [{ max }] = await q<{ max: string }>(`SELECT coalesce(max(id), 0)::text AS max FROM events`);
    const before = (await signaller.get(`/api/layouts/${SLUG}/live`)).body.counters.mainApproach;
    await board.publish(topic, payload);
    await board.pulse("MA"); // a good pulse right behind it
    await waitFor(async () => (await signaller.get(`/api/layouts/${SLUG}/live`)).body.counters.mainApproach === before + 1, "the good pulse applied");
    const rows = await q<{ status: string; reason: string | null; topic: string | null }>(`SELECT status, reason, topic FROM events WHERE id > :max ORDER BY id`, { max });
    const poison = rows.find((r) => r.topic === topic && r.status !== "accepted");
    expect(poison?.status, JSON.stringify(rows)).toBe("rejected");
    expect(poison?.reason).toBeTruthy();
    expect(h.runtime.health()[SLUG]).toBe("live");
    await board.end();
  });

  it("a signaller's reason with a NUL is refused at the door and the layout goes on", async () => {
    // http/bodyGuard.ts refuses a NUL in any JSON body; should one reach a commit anyway, the
    // committer stores it with safe text (unit-tested in runtime-core).
    const res = await signaller.post(`/api/layouts/${SLUG}/commands`).send({ type: "hold", signal: "B1", reason: "shunt\u0000ing" });
    expect(res.status).toBe(400);
    expect(h.runtime.health()[SLUG]).toBe("live");
    const ok = await signaller.post(`/api/layouts/${SLUG}/commands`).send({ type: "hold", signal: "B1", reason: "shunting" });
    expect(ok.status).toBe(200);
    await signaller.post(`/api/layouts/${SLUG}/commands`).send({ type: "release", signal: "B1", reason: "done shunting" });
  });
});
