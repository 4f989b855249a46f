/**
 * Quiet triggers fired by the server clock (stored as ticks, so a restart reproduces them),
 * sessions closing after idle, and the fail-safe when the engine itself fails. The server's
 * clock is a ManualClock: its timers fire when the test moves it, never after real waiting.
 */
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { QueryTypes } from "sequelize";
import { SIDING_BOARD, SIDING_QUIET_MS as QUIET_MS, SIDING_SLUG as SLUG, wrenfoldSidingLayout as sidingLayout } from "../fixtures/wrenfoldSiding";
import { startTestApp, type TestApp } from "../support/testApp";
import { connectBoard, onManualClock, startLiveHarness, waitFor, type LiveHarness } from "../support/live";
import { ManualClock } from "../support/manualClock";

/** Set by the fail-safe test: the engine's step throws while this is true. */
const engineBroken = vi.hoisted(() => ({ now: false }));
vi.mock("@shared/rulebook/engine", async (importOriginal) => {
  const engine = await importOriginal<typeof import("@shared/rulebook/engine")>();
  return {
    ...engine,
    step: (...args: Parameters<typeof engine.step>) => {
      if (engineBroken.now) throw new Error("simulated engine failure");
      return engine.step(...args);
    },
  };
});

const IDLE_MS = 1_500;

describe("clock, sessions and fail-safe", () => {
  let t: TestApp;
  let h: LiveHarness;
  let secret = "";
  const clock = new ManualClock();
  /** Moves the server clock, letting the runtime commit what each timer starts. */
  const advance = (ms: number) => clock.advance(ms, () => h.runtime.idle());
  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
    t.deps.db.sequelize.query<T>(sql, { type: QueryTypes.SELECT, replacements });

  beforeAll(async () => {
    t = await startTestApp();
    h = await startLiveHarness(t, onManualClock(clock, { sessionIdleMs: IDLE_MS }));
    const engineer = await t.signIn("engineer");
    expect((await engineer.post("/api/layouts/import").send(sidingLayout())).status).toBe(201);
    await waitFor(() => h.runtime.runner(SLUG) !== undefined, "the new layout's runner");
    const res = await engineer.post(`/api/layouts/${SLUG}/nodes`).send(SIDING_BOARD);
    secret = res.body.secret;
  });
  afterAll(async () => {
    await h?.close();
    await t?.close();
  });

  it("a quiet trigger fires from the server clock, is stored as a tick, and survives a restart", async () => {
    const board = await connectBoard(h.mqttUrl, SLUG, "siding-board", secret);
    await board.pulse("WS");
    await waitFor(() => board.aspects.get("S1")?.aspect === "clear", "S1 clear");
    const tickCount = async () => (await q<{ n: number }>(`SELECT count(*)::int AS n FROM events WHERE kind = 'tick'`))[0].n;
    await advance(QUIET_MS - 50);
    expect((await h.runtime.liveState(SLUG)).shown.S1).toBe("clear"); // not quiet long enough yet
    expect(await tickCount()).toBe(0);
    await advance(100);
    await waitFor(() => board.aspects.get("S1")?.aspect === "danger", "S1 back to danger after the quiet time");
    const ticks = await q<{ kind: string; input: { type: string } }>(`SELECT kind, input FROM events WHERE kind = 'tick'`);
    expect(ticks.length).toBe(1);
    const live = await h.runtime.liveState(SLUG);
    expect(live.counters.axles).toBe(0);
    expect(live.quiet).toEqual({});
    const before = h.runtime.runner(SLUG)!.engineState();
    await h.runtime.crash();
    const runtime = await h.startRuntime({ sessionIdleMs: IDLE_MS });
    expect(runtime.runner(SLUG)!.engineState()).toEqual(before);
    await board.end();
  });

  it("a session closes after idle and the next pulse opens a new one", async () => {
    const board = await connectBoard(h.mqttUrl, SLUG, "siding-board", secret, { boot: "sess01" });
    await board.pulse("WS");
    await waitFor(async () => (await q<{ n: number }>(`SELECT count(*)::int AS n FROM events WHERE boot = 'sess01'`))[0].n === 1, "the pulse");
    const [first] = await q<{ session_id: number }>(`SELECT session_id FROM events WHERE boot = 'sess01'`);
    const closeReason = async () => (await q<{ close_reason: string | null }>(`SELECT close_reason FROM sessions WHERE id = :id`, { id: first.session_id }))[0].close_reason;
    await h.runtime.idle();
    await advance(IDLE_MS - 100);
    expect(await closeReason()).toBeNull(); // not idle long enough yet
    await advance(200);
    expect(await closeReason()).toBe("idle");
    await board.pulse("WS");
    await waitFor(async () => (await q<{ n: number }>(`SELECT count(*)::int AS n FROM events WHERE boot = 'sess01'`))[0].n === 2, "the second pulse");
    const rows = await q<{ session_id: number }>(`SELECT session_id FROM events WHERE boot = 'sess01' ORDER BY id`);
    expect(rows[1].session_id).toBeGreaterThan(first.session_id);
    await board.end();
  });

  it("when the engine fails every signal goes to danger until a signaller restarts", async () => {
    const board = await connectBoard(h.mqttUrl, SLUG, "siding-board", secret, { boot: "fault1" });
    await board.pulse("WS");
    await waitFor(() => board.aspects.get("S1")?.aspect === "clear", "S1 clear");
    engineBroken.now = true;
    await board.pulse("WS");
    await waitFor(() => board.aspects.get("S1")?.aspect === "danger", "S1 at danger on the engine failure");
    await h.runtime.idle();
    const [event] = await q<{ status: string; reason: string }>(`SELECT status, reason FROM events WHERE boot = 'fault1' ORDER BY id DESC LIMIT 1`);
    expect(event.status).toBe("rejected");
    expect(event.reason).toMatch(/engine failed/);
    engineBroken.now = false;
    await board.pulse("WS"); // still refused: the pipeline stays at danger until a restart
    await waitFor(async () => (await q<{ n: number }>(`SELECT count(*)::int AS n FROM events WHERE boot = 'fault1'`))[0].n === 3, "the third pulse");
    expect((await h.runtime.liveState(SLUG)).faulted?.reason).toMatch(/engine failed/);
    const alarms = await q<{ kind: string }>(`SELECT kind FROM alarms WHERE kind = 'rulebook' AND subject = 'pipeline'`);
    expect(alarms.length).toBe(1);

    const signaller = await t.signIn("signaller");
    const res = await signaller.post(`/api/layouts/${SLUG}/commands`).send({ type: "restart", reason: "engine checked, resuming" });
    expect(res.status).toBe(200);
    expect(res.body.faulted).toBeNull();
    await board.pulse("WS");
    await waitFor(() => board.aspects.get("S1")?.aspect === "clear", "S1 clear again after the restart");
    await board.end();
  });

  it("publishing a new rulebook restarts the live layout from its initial state, keeps holds, and is audited", async () => {
    const board = await connectBoard(h.mqttUrl, SLUG, "siding-board", secret, { boot: "switch" });
    const signaller = await t.signIn("signaller");
    await signaller.post(`/api/layouts/${SLUG}/commands`).send({ type: "hold", signal: "S1", reason: "ganger on the siding" });
    await board.pulse("WS");
    await waitFor(async () => (await q<{ n: number }>(`SELECT count(*)::int AS n FROM events WHERE boot = 'switch'`))[0].n === 1, "the pulse stored");

    const engineer = await t.signIn("engineer");
    const next = sidingLayout().rulebook;
    (next.rules[1].on as { quiet: string; ms: number }).ms = QUIET_MS * 2;
    const draft = await engineer.post(`/api/layouts/${SLUG}/rulebooks`).send({ rulebook: next, note: "longer quiet time" });
    expect(draft.status).toBe(201);
    const version = draft.body.version as number;
    expect((await engineer.post(`/api/layouts/${SLUG}/rulebooks/${version}/publish`).send({ withoutProof: true, reason: "quiet trigger test" })).status).toBe(200);
    await waitFor(async () => (await h.runtime.liveState(SLUG)).rulebookVersion === version, "the runner on the new version");
    await h.runtime.idle();

    const live = await h.runtime.liveState(SLUG);
    expect(live.counters.axles).toBe(0);
    expect(live.held).toEqual(["S1"]);
    const audit = await q<{ target: string }>(`SELECT target FROM audit_entries WHERE action = 'live-rulebook-switched'`);
    expect(audit.map((a) => a.target)).toEqual([`version ${version}`]);

    const before = h.runtime.runner(SLUG)!.engineState();
    await h.runtime.crash();
    const runtime = await h.startRuntime({ sessionIdleMs: IDLE_MS });
    expect((await runtime.liveState(SLUG)).rulebookVersion).toBe(version);
    expect(runtime.runner(SLUG)!.engineState()).toEqual(before);
    await board.end();
  });
});
