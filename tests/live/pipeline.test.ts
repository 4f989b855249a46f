/**
 * The live pipeline end to end: real broker, real PostgreSQL, real MQTT boards, a real
 * socket.io browser. Assertions are on what a board, a browser and the database see. The
 * server's clock is a ManualClock: the reorder wait passes when the test moves it.
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import { DEMO_PASSWORD, demoEmail } from "../../server/db/seed/demo";
import { startTestApp, type TestApp } from "../support/testApp";
import { REORDER_WAIT_MS } from "../../server/runtime/runner";
import { connectBoard, connectBrowser, issueBoardSecrets, join, KESTREL_BOARDS, onManualClock, startLiveHarness, waitFor, type LiveHarness } from "../support/live";
import { ManualClock } from "../support/manualClock";

const SLUG = "kestrel-bank";
const topic = (node: string, kind: string) => `blocklight/v1/${SLUG}/node/${node}/${kind}`;

describe("live pipeline", () => {
  let t: TestApp;
  let h: LiveHarness;
  let secrets = new Map<string, string>();
  let signallerCookie = "";
  const clock = new ManualClock();

  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
    t.deps.db.sequelize.query<T>(sql, { type: QueryTypes.SELECT, replacements });
  const maxEventId = async () => (await q<{ id: string }>(`SELECT coalesce(max(id), 0)::text AS id FROM events`))[0].id;
  /** Waits until `n` more events than after `afterId` are committed. */
  const eventsAfter = async (afterId: string, n = 1) => {
    await waitFor(async () => (await q<{ n: number }>(`SELECT count(*)::int AS n FROM events WHERE id > :afterId`, { afterId }))[0].n >= n, `${n} new event(s)`);
    await h.runtime.idle();
  };
  const layoutId = async () => (await q<{ id: number }>(`SELECT id FROM layouts WHERE slug = :slug`, { slug: SLUG }))[0].id;

  beforeAll(async () => {
    t = await startTestApp();
    // The contract's reorder wait (10 s), passed on the hand-driven clock.
    h = await startLiveHarness(t, onManualClock(clock, { reorderWaitMs: REORDER_WAIT_MS }));
    secrets = await issueBoardSecrets(t, SLUG, Object.values(KESTREL_BOARDS));
    const login = await request(t.app).post("/api/auth/login").send({ email: demoEmail("signaller"), password: DEMO_PASSWORD });
    signallerCookie = (login.headers["set-cookie"] as unknown as string[]).map((c) => c.split(";")[0]).join("; ");
  });
  afterAll(async () => {
    await h?.close();
    await t?.close();
  });

  it("a train's pulses reach the database, the boards' retained topics and the browser", async () => {
    const browser = await connectBrowser(h.httpUrl, signallerCookie);
    const joined = await join(browser.socket, SLUG);
    expect(joined.ok).toBe(true);
    const startVersion = joined.ok ? joined.data.version : 0;
    expect(joined.ok && joined.data.shown).toEqual({ M1: "danger", B1: "danger", S1: "danger" });

    const bankFoot = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!);
    const junction = await connectBoard(h.mqttUrl, SLUG, "junction", secrets.get("junction")!);
    await waitFor(() => junction.aspects.get("M1")?.aspect === "danger", "the retained M1 danger");

    await bankFoot.pulse("MA");
    await bankFoot.pulse("MA");
    await waitFor(() => junction.aspects.get("M1")?.aspect === "clear", "M1 clear at the junction board");
    const clearRev = junction.aspects.get("M1")!.rev;
    await junction.pulse("ME");
    await junction.pulse("ME");
    await waitFor(() => junction.aspects.get("M1")?.aspect === "danger", "M1 back to danger");
    expect(junction.aspects.get("M1")!.rev).toBeGreaterThan(clearRev);
    await junction.pulse("JX");
    await junction.pulse("JX");
    await waitFor(async () => (await q<{ n: number }>(`SELECT count(*)::int AS n FROM events WHERE kind = 'pulse'`))[0].n === 6, "six stored pulses");
    await h.runtime.idle();

    const events = await q<{ kind: string; status: string; detector: string; session_id: number | null }>(
      `SELECT kind, status, detector, session_id FROM events WHERE layout_id = :id AND kind = 'pulse' ORDER BY id`,
      { id: await layoutId() },
    );
    expect(events.map((e) => e.detector)).toEqual(["MA", "MA", "ME", "ME", "JX", "JX"]);
    expect(events.every((e) => e.status === "accepted" && e.session_id !== null)).toBe(true);
    const changes = await q<{ name: string; to_value: unknown; rule: string }>(
      `SELECT c.name, c.to_value, c.rule FROM changes c JOIN events e ON e.id = c.event_id WHERE e.layout_id = :id AND c.kind = 'shown' ORDER BY c.id`,
      { id: await layoutId() },
    );
    expect(changes.map((c) => `${c.name}:${c.to_value}`)).toEqual(["M1:clear", "M1:danger"]);
    const rev = await q<{ aspect_rev: string }>(`SELECT aspect_rev FROM layouts WHERE slug = :slug`, { slug: SLUG });
    expect(Number(rev[0].aspect_rev)).toBeGreaterThanOrEqual(junction.aspects.get("M1")!.rev);

    // A board connecting later gets the newest command at once (retained).
    const late = await connectBoard(h.mqttUrl, SLUG, "quarry", secrets.get("quarry")!);
    await waitFor(() => late.aspects.get("M1")?.aspect === "danger" && late.aspects.has("B1"), "retained aspects for a late board");

    const steps = () => browser.updates.flatMap((u) => u.steps);
    await waitFor(() => steps().filter((s) => s.event?.kind === "pulse").length === 6, "six pushed pulse steps");
    const versions = steps().map((s) => s.version);
    expect(versions).toEqual(versions.map((_, i) => startVersion + 1 + i)); // no gaps
    // One push per commit batch: each starts where the one before ended.
    expect(browser.updates.every((u, i) => u.from === (i === 0 ? startVersion + 1 : browser.updates[i - 1].version + 1) && u.version === u.from + u.steps.length - 1)).toBe(true);
    const clearing = browser.updates.find((u) => u.steps.some((s) => s.changes.some((c) => c.kind === "shown" && c.to === "clear")));
    expect(clearing?.patch.shown?.M1).toBe("clear");
    expect(clearing?.steps.flatMap((s) => s.changes).find((c) => c.kind === "shown")?.rule).toBe("give-main");

    const live = await request(t.app).get(`/api/layouts/${SLUG}/live`).set("Cookie", signallerCookie);
    expect(live.status).toBe(200);
    expect(live.body.counters).toEqual({ mainApproach: 0, branchApproach: 0, shedApproach: 0, junction: 0 });
    expect(live.body.session.id).toBe(events[0].session_id);

    browser.socket.disconnect();
    await Promise.all([bankFoot.end(), junction.end(), late.end()]);
  });

  it("a redelivered pulse is stored as a duplicate and changes nothing", async () => {
    const board = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!, { boot: "dup001" });
    await board.pulse("MA");
    await h.runtime.idle();
    await eventsAfter("0", 1);
    const mark = await maxEventId();
    const before = await request(t.app).get(`/api/layouts/${SLUG}/live`).set("Cookie", signallerCookie);
    // The same (node, boot, seq) again, as a QoS 1 redelivery would bring it.
    await board.publish(topic("bank-foot", "pulse"), JSON.stringify({ detector: "MA", seq: 1, boot: "dup001" }));
    await eventsAfter(mark);
    const after = await request(t.app).get(`/api/layouts/${SLUG}/live`).set("Cookie", signallerCookie);
    expect(after.body.counters).toEqual(before.body.counters);
    const rows = await q<{ status: string; reason: string; n: number }>(
      `SELECT e.status, e.reason, (SELECT count(*) FROM changes c WHERE c.event_id = e.id)::int AS n
         FROM events e WHERE e.boot = 'dup001' ORDER BY e.id`,
    );
    expect(rows.map((r) => r.status)).toEqual(["accepted", "duplicate"]);
    expect(rows[1].n).toBe(0);
    await board.end();
  });

  it.each([
    ["malformed JSON", "pulse", "{not json", /malformed JSON/],
    ["an oversized payload", "pulse", JSON.stringify({ detector: "MA", seq: 99, boot: "x", pad: "p".repeat(1100) }), /over 1024 bytes/],
    ["a detector the node does not serve", "pulse", JSON.stringify({ detector: "ME", seq: 1, boot: "unserved" }), /not served by node "bank-foot"/],
    ["an unknown field", "pulse", JSON.stringify({ detector: "MA", seq: 1, boot: "x", extra: 1 }), /invalid pulse/],
    ["an unknown message kind", "gossip", JSON.stringify({ hello: 1 }), /wrong topic shape/],
  ])("%s is refused and recorded with its reason", async (_name, kind, payload, reason) => {
    const board = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!);
    await h.runtime.idle();
    const mark = await maxEventId();
    const countBefore = (await request(t.app).get(`/api/layouts/${SLUG}/live`).set("Cookie", signallerCookie)).body.counters;
    await board.publish(topic("bank-foot", kind), payload);
    await eventsAfter(mark);
    const rows = await q<{ status: string; reason: string; topic: string }>(`SELECT status, reason, topic FROM events ORDER BY id DESC LIMIT 1`);
    expect(rows[0].status).toBe("rejected");
    expect(rows[0].reason).toMatch(reason);
    expect(rows[0].topic).toBe(topic("bank-foot", kind));
    const countAfter = (await request(t.app).get(`/api/layouts/${SLUG}/live`).set("Cookie", signallerCookie)).body.counters;
    expect(countAfter).toEqual(countBefore);
    await board.end();
  });

  it("a board publishing under another node's prefix is disconnected, and the message never arrives", async () => {
    const board = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!);
    const closed = new Promise<void>((resolve) => board.client.once("close", () => resolve()));
    const lastId = (await q<{ id: string }>(`SELECT coalesce(max(id), 0)::text AS id FROM events`))[0].id;
    board.client.publish(topic("junction", "pulse"), JSON.stringify({ detector: "ME", seq: 1, boot: "forged" }), { qos: 1 });
    await closed;
    expect(h.refusals.some((r) => r.what === "publish" && r.topic === topic("junction", "pulse"))).toBe(true);
    await h.runtime.idle();
    const rows = await q<{ n: number }>(`SELECT count(*)::int AS n FROM events WHERE id > :lastId AND boot = 'forged'`, { lastId });
    expect(rows[0].n).toBe(0);
    // Stopped, not just its closed client ended: a reference board reconnects after a drop, and
    // a board left reconnecting would take its client id over from every later bank-foot board
    // (each takeover a Last Will and resent pulses: events landing in the middle of later tests).
    await board.end();
  });

  it("a board may not subscribe outside its layout's signals", async () => {
    const board = await connectBoard(h.mqttUrl, SLUG, "junction", secrets.get("junction")!);
    await expect(board.client.subscribeAsync(`blocklight/v1/${SLUG}/node/#`, { qos: 1 })).rejects.toThrow(/Subscribe error/);
    expect(h.refusals.some((r) => r.what === "subscribe" && r.topic === `blocklight/v1/${SLUG}/node/#`)).toBe(true);
    const ok = await board.client.subscribeAsync(`blocklight/v1/${SLUG}/signal/+/aspect`, { qos: 1 });
    expect(ok[0].qos).toBe(1);
    await board.end();
  });

  it("wrong credentials are refused at connect", async () => {
    await expect(connectBoard(h.mqttUrl, SLUG, "junction", "not-the-secret")).rejects.toThrow(/Bad username or password|Not authorized/i);
    await expect(connectBoard(h.mqttUrl, SLUG, "no-such-node", "whatever")).rejects.toThrow();
    expect(h.refusals.filter((r) => r.what === "connect").length).toBeGreaterThanOrEqual(2);
  });

  it("a gap in seq raises a missed-pulses alarm", async () => {
    const board = await connectBoard(h.mqttUrl, SLUG, "quarry", secrets.get("quarry")!, { boot: "gap001" });
    await board.pulse("BA"); // seq 1
    board.seq = 4; // seqs 2..4 lost on the way (never kept, so never resent)
    await board.pulse("BE"); // seq 5: waits for 2..4, then they are declared missed
    await waitFor(() => h.runtime.runner(SLUG)!.waiting() === 1, "seq 5 waiting for the missing ones");
    const missedAlarm = async () => {
      const res = await request(t.app).get(`/api/layouts/${SLUG}/alarms?state=open`).set("Cookie", signallerCookie);
      return res.body.alarms.some((a: { kind: string; message: string }) => a.kind === "missed-pulses" && /3 pulse/.test(a.message));
    };
    await h.runtime.idle();
    await clock.advance(REORDER_WAIT_MS - 100, () => h.runtime.idle());
    expect(h.runtime.runner(SLUG)!.waiting()).toBe(1); // still inside the reorder wait
    expect(await missedAlarm()).toBe(false);
    await clock.advance(200, () => h.runtime.idle());
    expect(h.runtime.runner(SLUG)!.waiting()).toBe(0);
    await waitFor(missedAlarm, "the missed-pulses alarm");
    await board.end();
  });

  it("a status message and its Last Will mark the node online and offline", async () => {
    const board = await connectBoard(h.mqttUrl, SLUG, "junction", secrets.get("junction")!, { boot: "will01" });
    await board.client.publishAsync(topic("junction", "status"), JSON.stringify({ online: true, boot: "will01", fw: "0.9.0" }), { qos: 1, retain: true });
    await h.runtime.idle();
    let live = await request(t.app).get(`/api/layouts/${SLUG}/live`).set("Cookie", signallerCookie);
    await waitFor(async () => {
      live = await request(t.app).get(`/api/layouts/${SLUG}/live`).set("Cookie", signallerCookie);
      return live.body.nodes.junction.online === true;
    }, "junction online");
    board.board.kill(); // power lost: the connection dies without DISCONNECT, and the board stays off
    await waitFor(async () => {
      live = await request(t.app).get(`/api/layouts/${SLUG}/live`).set("Cookie", signallerCookie);
      return live.body.nodes.junction.online === false;
    }, "junction offline via its Last Will");
  });

  it("a lamp-proving report that differs from the command raises an alarm", async () => {
    const board = await connectBoard(h.mqttUrl, SLUG, "junction", secrets.get("junction")!);
    await waitFor(() => board.aspects.has("M1"), "the M1 command");
    const commanded = board.aspects.get("M1")!;
    const wrong = commanded.aspect === "clear" ? "danger" : "clear";
    await board.publish(topic("junction", "shown"), JSON.stringify({ signal: "M1", aspect: wrong, rev: commanded.rev }));
    await h.runtime.idle();
    await waitFor(async () => {
      const res = await request(t.app).get(`/api/layouts/${SLUG}/alarms`).set("Cookie", signallerCookie);
      return res.body.alarms.some((a: { kind: string; subject: string }) => a.kind === "lamp-proving" && a.subject === "M1");
    }, "the lamp-proving alarm");
    await board.end();
  });

  it("a signaller's hold is applied, audited and published", async () => {
    const agent = await t.signIn("signaller");
    const board = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!, { boot: "hold01" });
    const junction = await connectBoard(h.mqttUrl, SLUG, "junction", secrets.get("junction")!);
    const res = await agent.post(`/api/layouts/${SLUG}/commands`).send({ type: "hold", signal: "M1", reason: "shunt in the quarry siding" });
    expect(res.status).toBe(200);
    expect(res.body.held).toEqual(["M1"]);
    await board.pulse("MA");
    let live = await agent.get(`/api/layouts/${SLUG}/live`);
    await waitFor(async () => {
      live = await agent.get(`/api/layouts/${SLUG}/live`);
      return live.body.counters.mainApproach > 0;
    }, "the approach counted");
    expect(live.body.shown.M1).toBe("danger");
    await waitFor(() => junction.aspects.get("M1")?.aspect === "danger", "M1 danger while held");
    const released = await agent.post(`/api/layouts/${SLUG}/commands`).send({ type: "release", signal: "M1", reason: "shunt finished" });
    expect(released.body.shown.M1).toBe("clear");
    await waitFor(() => junction.aspects.get("M1")?.aspect === "clear", "M1 clear after release");
    const audit = await q<{ action: string; reason: string; before: { held: string[] }; after: { held: string[] } }>(
      `SELECT action, reason, before, after FROM audit_entries WHERE action LIKE 'command-%' ORDER BY id`,
    );
    expect(audit.map((a) => a.action)).toEqual(["command-hold", "command-release"]);
    expect(audit[0]).toMatchObject({ reason: "shunt in the quarry siding", before: { held: [] }, after: { held: ["M1"] } });
    const bad = await agent.post(`/api/layouts/${SLUG}/commands`).send({ type: "hold", signal: "M1" });
    expect(bad.status).toBe(400);
    const unknown = await agent.post(`/api/layouts/${SLUG}/commands`).send({ type: "zero", counter: "nowhere", reason: "typo check" });
    expect(unknown.status).toBe(400);
    expect(unknown.body.error.details[0].path).toBe("$.counter");
    // Let the train through so later tests start from an empty junction.
    await board.pulse("MA"); // no-op approach count bump is fine for later tests
    await agent.post(`/api/layouts/${SLUG}/commands`).send({ type: "restart", reason: "back to a clean junction" });
    await Promise.all([board.end(), junction.end()]);
  });

  it("the session's event log streams as JSONL and CSV, each event with its changes", async () => {
    const agent = await t.signIn("maintainer");
    const sessions = await agent.get(`/api/layouts/${SLUG}/sessions`);
    expect(sessions.status).toBe(200);
    const session = sessions.body.sessions[0];
    const jsonl = await agent.get(`/api/sessions/${session.id}/events?format=jsonl`).buffer(true).parse((res, cb) => {
      let text = "";
      res.on("data", (c: Buffer) => (text += c.toString()));
      res.on("end", () => cb(null, text));
    });
    expect(jsonl.status).toBe(200);
    const lines = (jsonl.body as string).trim().split("\n").map((l) => JSON.parse(l));
    expect(lines.length).toBe(session.eventCount);
    expect(lines.find((l) => l.changes.some((c: { rule?: string }) => c.rule === "give-main"))).toBeTruthy();
    const csv = await agent.get(`/api/sessions/${session.id}/events?format=csv`);
    expect(csv.headers["content-type"]).toMatch(/text\/csv/);
    expect(csv.text.split("\r\n")[0]).toBe("id,receivedAt,kind,status,reason,node,boot,seq,detector,boardT,signal,aspect,rev,online,fw,command,latch,counter,by,commandReason,topic,user,changes");
  });

  it("display links open the live state read-only, and revoking one disconnects its socket", async () => {
    const admin = await t.signIn("admin");
    const made = await admin.post(`/api/layouts/${SLUG}/display-links`).send({ label: "open day screen" });
    expect(made.status).toBe(201);
    expect(made.body.url).toBe(`/display/${made.body.token}`);
    const live = await request(t.app).get(`/api/layouts/${SLUG}/live?display=${made.body.token}`);
    expect(live.status).toBe(200);
    expect(live.body.shown).toBeTruthy();
    expect((await request(t.app).get(`/api/layouts/wrenfold-loop/live?display=${made.body.token}`)).status).toBe(401);

    const visitor = await connectBrowser(h.httpUrl);
    expect((await join(visitor.socket, SLUG)).ok).toBe(false);
    expect((await join(visitor.socket, SLUG, made.body.token)).ok).toBe(true);
    const gone = new Promise<void>((resolve) => visitor.socket.once("disconnect", () => resolve()));
    const revoked = await admin.delete(`/api/layouts/${SLUG}/display-links/${made.body.token}`);
    expect(revoked.status).toBe(204);
    await gone;
    expect((await request(t.app).get(`/api/layouts/${SLUG}/live?display=${made.body.token}`)).status).toBe(401);
    const list = await admin.get(`/api/layouts/${SLUG}/display-links`);
    expect(list.body.links[0].revokedAt).not.toBeNull();
  });
});
