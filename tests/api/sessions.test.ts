/**
 * Sessions: the paged, filtered event log and the replay inputs. The sessions are made by
 * the real live runtime (real broker, real MQTT boards, signaller commands over REST), so
 * the rows are exactly what the runner writes.
 */
import request from "supertest";
import { QueryTypes } from "sequelize";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { SessionEventPage, SessionInputsResponse, SessionListResponse } from "@shared/contract/sessions";
import { shownAspects, step, type EngineState } from "@shared/rulebook/engine";
import type { Rulebook } from "@shared/rulebook/schema";
import { connectBoard, issueBoardSecrets, KESTREL_BOARDS, startLiveHarness, waitFor, type Board, type LiveHarness } from "../support/live";
import { startTestApp, type TestApp } from "../support/testApp";

const SLUG = "kestrel-bank";
const pulseTopic = (node: string) => `blocklight/v1/${SLUG}/node/${node}/pulse`;

describe("sessions: event log pages and replay inputs", () => {
  let t: TestApp;
  let h: LiveHarness;
  let viewer: Awaited<ReturnType<TestApp["signIn"]>>;
  let firstSession = 0;
  let secondSession = 0;

  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
    t.deps.db.sequelize.query<T>(sql, { type: QueryTypes.SELECT, replacements });
  const eventCount = async () => (await q<{ n: number }>(`SELECT count(*)::int AS n FROM events`))[0].n;
  const settled = async (n: number) => {
    await waitFor(async () => (await eventCount()) >= n, `${n} stored events`);
    await h.runtime.idle();
  };

  beforeAll(async () => {
    t = await startTestApp();
    // Frequent snapshots, so the second session's start is rebuilt from a snapshot plus later inputs.
    h = await startLiveHarness(t, { snapshotEvery: 3 });
    const secrets = await issueBoardSecrets(t, SLUG, [KESTREL_BOARDS.bankFoot, KESTREL_BOARDS.junction]);
    const bankFoot: Board = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!);
    const junction: Board = await connectBoard(h.mqttUrl, SLUG, "junction", secrets.get("junction")!);
    const signaller = await t.signIn("signaller");
    let stored = await eventCount();

    // Session 1: a two-axle main-line train approaches (M1 clears), one redelivery, one refused pulse.
    await bankFoot.pulse("MA");
    await bankFoot.pulse("MA");
    await settled((stored += 2));
    await bankFoot.publish(pulseTopic("bank-foot"), JSON.stringify({ detector: "MA", seq: bankFoot.seq, boot: bankFoot.boot }));
    await bankFoot.publish(pulseTopic("bank-foot"), JSON.stringify({ detector: "JX", seq: bankFoot.seq + 1, boot: bankFoot.boot }));
    await settled((stored += 2));
    await h.runtime.session(SLUG, "close", { id: 1, name: "test" });

    // Session 2 starts with the train still on the approach: it enters, a hold and release, it clears.
    await junction.pulse("ME");
    await junction.pulse("ME");
    await settled((stored += 2));
    expect((await signaller.post(`/api/layouts/${SLUG}/commands`).send({ type: "hold", signal: "M1", reason: "shunt in the quarry siding" })).status).toBe(200);
    expect((await signaller.post(`/api/layouts/${SLUG}/commands`).send({ type: "release", signal: "M1", reason: "shunt finished" })).status).toBe(200);
    await junction.pulse("JX");
    await junction.pulse("JX");
    await settled((stored += 4));
    await bankFoot.end();
    await junction.end();

    viewer = await t.signIn("viewer");
    const list = await viewer.get(`/api/layouts/${SLUG}/sessions`);
    const sessions = (list.body as SessionListResponse).sessions;
    [secondSession, firstSession] = sessions.map((s) => s.id);
    expect(sessions).toHaveLength(2);
  });
  afterAll(async () => {
    await h?.close();
    await t?.close();
  });

  const page = async (id: number, query: string) => {
    const res = await viewer.get(`/api/sessions/${id}/events?format=json&${query}`);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    return res.body as SessionEventPage;
  };

  it("lists the sessions newest first with their rulebook version and event counts", async () => {
    const res = await viewer.get(`/api/layouts/${SLUG}/sessions`);
    const [second, first] = (res.body as SessionListResponse).sessions;
    expect(first.closedAt).not.toBeNull();
    expect(first.rulebookVersion).toBe(1);
    expect(first.eventCount).toBeGreaterThanOrEqual(4);
    expect(second.closedAt).toBeNull();
  });

  it("pages through the log oldest first, keyset by event id", async () => {
    const all = await page(secondSession, "limit=500");
    expect(all.next).toBeNull();
    expect(all.total).toBe(all.events.length);
    const seen: string[] = [];
    let after = "0";
    for (let guard = 0; guard < 20; guard++) {
      const p = await page(secondSession, `limit=2&after=${after}`);
      expect(p.events.length).toBeLessThanOrEqual(2);
      expect(p.total).toBe(all.total);
      seen.push(...p.events.map((e) => e.id));
      if (!p.next) break;
      after = p.next;
    }
    expect(seen).toEqual(all.events.map((e) => e.id));
    expect(seen.map(Number)).toEqual([...seen.map(Number)].sort((a, b) => a - b));
    // Each row carries its changes with the rule that made them, as the JSONL export does.
    const entered = all.events.find((e) => e.kind === "pulse" && e.detector === "ME")!;
    expect(entered.changes.some((c) => c.kind === "shown" && c.name === "M1" && c.to === "danger")).toBe(true);
  });

  it.each([
    ["kind=command", (e: SessionEventPage["events"][number]) => e.kind === "command", 2],
    ["kind=pulse&detector=ME", (e: SessionEventPage["events"][number]) => e.kind === "pulse" && e.detector === "ME", 2],
    ["node=junction&detector=JX", (e: SessionEventPage["events"][number]) => e.node === "junction" && e.detector === "JX", 2],
    ["status=accepted&kind=pulse", (e: SessionEventPage["events"][number]) => e.status === "accepted" && e.kind === "pulse", 4],
  ])("session 2 filtered by %s", async (query, predicate, count) => {
    const p = await page(secondSession, query);
    expect(p.total).toBe(count);
    expect(p.events).toHaveLength(count);
    expect(p.events.every(predicate)).toBe(true);
  });

  it("filters by status and searches the reason text, case-insensitively", async () => {
    const duplicates = await page(firstSession, "status=duplicate");
    expect(duplicates.events.map((e) => [e.kind, e.detector])).toEqual([["pulse", "MA"]]);
    const rejected = await page(firstSession, "status=rejected");
    expect(rejected.total).toBe(1);
    const reason = rejected.events[0].reason!;
    const word = reason.split(/\s+/).find((w) => /^[a-z]{4,}$/i.test(w))!;
    const found = await page(firstSession, `q=${encodeURIComponent(word.toUpperCase())}`);
    expect(found.events.map((e) => e.id)).toContain(rejected.events[0].id);
    expect((await page(firstSession, "q=%25_nothing_like_this")).total).toBe(0);
  });

  it.each([
    ["limit=0", 400],
    ["limit=501", 400],
    ["kind=wheel", 400],
    ["status=maybe", 400],
    ["after=abc", 400],
    ["detector=a%20b", 400],
  ])("refuses a bad page query %s", async (query, status) => {
    const res = await viewer.get(`/api/sessions/${secondSession}/events?format=json&${query}`);
    expect(res.status).toBe(status);
    expect(res.body.error.code).toBeTruthy();
  });

  it("answers 404 for a session that does not exist", async () => {
    expect((await viewer.get(`/api/sessions/999999/events?format=json`)).status).toBe(404);
    expect((await viewer.get(`/api/sessions/999999/inputs`)).status).toBe(404);
  });

  it("gives the accepted inputs in applied order, pulses at their receipt time", async () => {
    const res = await viewer.get(`/api/sessions/${secondSession}/inputs`);
    expect(res.status).toBe(200);
    const body = res.body as SessionInputsResponse;
    expect(body.rulebookVersion).toBe(1);
    expect(body.rulebookSwitches).toEqual([]);
    expect(body.inputs.map((i) => (i.type === "pulse" ? i.detector : i.type === "command" ? i.command : i.type))).toEqual([
      "ME",
      "ME",
      "hold",
      "release",
      "JX",
      "JX",
    ]);
    const log = await page(secondSession, "status=accepted&limit=500");
    const engineEvents = log.events.filter((e) => e.kind === "pulse" || e.kind === "command" || e.kind === "tick");
    body.inputs.forEach((input, i) => expect(input.at).toBe(Date.parse(engineEvents[i].receivedAt)));
    const hold = body.inputs[2];
    expect(hold.type === "command" && hold.command === "hold" && hold.signal).toBe("M1");

    const first = (await viewer.get(`/api/sessions/${firstSession}/inputs`)).body as SessionInputsResponse;
    // Only accepted pulses: the redelivery and the refused pulse are not inputs.
    expect(first.inputs.map((i) => i.type === "pulse" && i.detector)).toEqual(["MA", "MA"]);
  });

  it("replaying the inputs from the given start reproduces every recorded aspect change", async () => {
    const body = (await viewer.get(`/api/sessions/${secondSession}/inputs`)).body as SessionInputsResponse;
    // The train came onto the approach in session 1: session 2 starts with it counted.
    expect(Object.values(body.start.counters).some((n) => n > 0)).toBe(true);
    const rulebook = (await viewer.get(`/api/layouts/${SLUG}/rulebooks/1`)).body.version.rulebook as Rulebook;
    const log = await page(secondSession, "status=accepted&limit=500");
    const recorded = log.events.filter((e) => e.kind === "pulse" || e.kind === "command" || e.kind === "tick");
    let state: EngineState = body.start;
    body.inputs.forEach((input, i) => {
      const result = step(rulebook, state, input);
      state = result.state;
      const shown = (changes: { kind: string; name: string; to: unknown }[]) => changes.filter((c) => c.kind === "shown").map((c) => `${c.name}:${String(c.to)}`);
      expect(shown(result.changes)).toEqual(shown(recorded[i].changes));
    });
    expect(shownAspects(rulebook, state).M1).toBe("danger");
  });

  it("needs a signed-in member", async () => {
    expect((await request(t.app).get(`/api/sessions/${secondSession}/inputs`)).status).toBe(401);
    expect((await request(t.app).get(`/api/sessions/${secondSession}/events?format=json`)).status).toBe(401);
  });
});
