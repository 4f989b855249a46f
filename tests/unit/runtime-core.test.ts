/**
 * The live runner's pure core, table by table, without PostgreSQL or MQTT: the sequencer
 * (strict seq order, reorder wait, duplicate / late / missed), and `apply` (rows and effects
 * of messages, ticks, commands), CONTRACT.md §2.
 */
import { describe, expect, it } from "vitest";
import { apply, nextDue, type CoreInput } from "../../server/runtime/core/apply";
import { covered, emptyTracker, expire, offer, type SeqDecision } from "../../server/runtime/core/sequencer";
import { aspectCommands, createCore, type Core, type HeldMessage } from "../../server/runtime/core/state";
import { ingestMessage } from "../../server/runtime/ingest";
import { initialState } from "@shared/rulebook/engine";
import type { Rulebook } from "@shared/rulebook/schema";

const WAIT_MS = 10_000;
const brief = (ds: SeqDecision<string>[]) =>
  ds.map((d) => (d.type === "missed" ? `missed ${d.from}-${d.to} (${d.why})` : d.type === "wait" ? `wait ${d.seq}` : `${d.type} ${d.seq}`));

describe("sequencer", () => {
  it.each([
    ["in order", [1, 2, 3], ["release 1", "release 2", "release 3"]],
    ["a message ahead of a gap waits, the missing one releases both", [1, 3, 2], ["release 1", "wait 3", "release 2", "release 3"]],
    ["a redelivered seq already stored", [1, 2, 1], ["release 1", "release 2", "duplicate 1"]],
    ["a redelivered seq still waiting", [1, 3, 3], ["release 1", "wait 3", "duplicate 3"]],
    ["the first message of a boot is not seq 1", [2, 1], ["wait 2", "release 1", "release 2"]],
  ])("%s", (_name, seqs, expected) => {
    const tracker = emptyTracker<string>();
    const out = seqs.flatMap((seq) => brief(offer(tracker, "b", "boot1", seq, `m${seq}`, 0)));
    expect(out).toEqual(expected);
  });

  it("after the wait, the gap is declared missed and the waiting ones released; the missing seq is then late", () => {
    const tracker = emptyTracker<string>();
    offer(tracker, "b", "x", 1, "m1", 0);
    offer(tracker, "b", "x", 4, "m4", 100);
    offer(tracker, "b", "x", 5, "m5", 200);
    expect(brief(expire(tracker, WAIT_MS + 99, WAIT_MS))).toEqual([]);
    expect(brief(expire(tracker, WAIT_MS + 100, WAIT_MS))).toEqual(["missed 2-3 (timeout)", "release 4", "release 5"]);
    expect(covered(tracker, "b", "x")).toBe(5);
    expect(brief(offer(tracker, "b", "x", 2, "m2", WAIT_MS + 200))).toEqual(["late 2"]);
    expect(brief(offer(tracker, "b", "x", 5, "m5", WAIT_MS + 200))).toEqual(["duplicate 5"]);
  });

  it("a new boot declares the old boot's gaps missed at once; the old boot's stragglers are late", () => {
    const tracker = emptyTracker<string>();
    offer(tracker, "b", "old", 1, "o1", 0);
    offer(tracker, "b", "old", 3, "o3", 0);
    expect(brief(offer(tracker, "b", "new", 1, "n1", 10))).toEqual(["missed 2-2 (new-boot)", "release 3", "release 1"]);
    expect(brief(offer(tracker, "b", "old", 4, "o4", 20))).toEqual(["late 4"]);
    expect(brief(offer(tracker, "b", "old", 2, "o2", 20))).toEqual(["late 2"]);
  });

  it("boards are independent: one board's gap holds up no other", () => {
    const tracker = emptyTracker<string>();
    offer(tracker, "a", "x", 2, "a2", 0);
    expect(brief(offer(tracker, "b", "y", 1, "b1", 0))).toEqual(["release 1"]);
  });
});

/** A counter per pulse on D1; S1 clear while the counter is odd. */
const rulebook: Rulebook = {
  format: "blocklight.rulebook/1",
  latches: {},
  counters: { n: 0 },
  selectors: {},
  initial: { S1: "danger" },
  rules: [
    { id: "count", on: { pass: "D1" }, do: [{ add: "n", by: 1 }] },
    { id: "quiet", on: { quiet: "D1", ms: 500 }, do: [{ zero: "n" }] },
    { id: "odd", on: "standing", if: { count: "n", op: "==", value: 1 }, do: [{ show: "S1", aspect: "clear" }] },
  ],
} as Rulebook;

function core(): Core {
  const c = createCore({
    layoutId: 1,
    slug: "fernmoor-test",
    options: { sessionIdleMs: 60_000, snapshotEvery: 1000, reorderWaitMs: WAIT_MS },
    rulebook,
    rulebookVersion: 1,
    state: initialState(rulebook, 0),
    aspectRev: 0,
  });
  c.nodes.set("board", { detectors: new Set(["D1"]), signals: new Set(["S1"]) });
  aspectCommands(c, true);
  return c;
}

let ref = 0;
function message(suffix: string, payload: unknown, at: number): CoreInput {
  const topic = `blocklight/v1/fernmoor-test/node/board/${suffix}`;
  const bytes = Buffer.isBuffer(payload) ? payload : Buffer.from(typeof payload === "string" ? payload : JSON.stringify(payload));
  const result = ingestMessage(topic, bytes, () => new Map([["board", { detectors: new Set(["D1"]), signals: new Set(["S1"]) }]]));
  const held: HeldMessage = { topic, payload: bytes, receivedAt: at, result, ref: ++ref };
  return { type: "message", message: held, retain: false };
}

describe("apply", () => {
  it.each([
    ["a pulse in order: applied, confirmed", [{ detector: "D1", seq: 1, boot: "k" }], ["accepted"], { n: 1 }, 1],
    ["a duplicate: stored, changes nothing, confirmed again", [{ detector: "D1", seq: 1, boot: "k" }, { detector: "D1", seq: 1, boot: "k" }], ["accepted", "duplicate"], { n: 1 }, 1],
    ["a pulse ahead of a gap: nothing stored yet, nothing confirmed", [{ detector: "D1", seq: 2, boot: "k" }], [], { n: 0 }, 0],
    ["the gap filled: both applied in seq order", [{ detector: "D1", seq: 2, boot: "k" }, { detector: "D1", seq: 1, boot: "k" }], ["accepted", "accepted"], { n: 2 }, 2],
    ["an unserved detector: rejected in its seq's place", [{ detector: "D9", seq: 1, boot: "k" }, { detector: "D1", seq: 2, boot: "k" }], ["rejected", "accepted"], { n: 1 }, 2],
  ])("%s", (_name, payloads, statuses, counters, confirmed) => {
    let c = core();
    const rows: string[] = [];
    let lastCovered = 0;
    const settled: number[] = [];
    payloads.forEach((p, i) => {
      const step = apply(c, message("pulse", p, 1000 + i), 1000 + i);
      c = step.core;
      rows.push(...step.rows.events.map((e) => e.status));
      for (const e of step.effects) {
        if (e.type === "covered") lastCovered = e.seq;
        if (e.type === "settle") settled.push(e.ref);
      }
    });
    expect(rows).toEqual(statuses);
    expect(c.state.counters).toEqual(counters);
    expect(lastCovered).toBe(confirmed);
    expect(settled.length).toBe(statuses.length); // a waiting message is acknowledged only once stored
  });

  it.each([
    ["malformed JSON", "pulse", "{nope", /malformed JSON/],
    ["bytes that are not UTF-8", "pulse", Buffer.from([0x7b, 0x22, 0xff, 0x00, 0x22, 0x7d]), /not valid UTF-8/],
    ["a NUL in boot", "pulse", { detector: "D1", seq: 1, boot: "a\u0000b" }, /printable/],
    ["a NUL in fw", "status", { online: true, fw: "1.\u00000" }, /printable/],
    ["a seq of 2^53", "pulse", { detector: "D1", seq: 2 ** 53, boot: "k" }, /invalid pulse/],
  ])("%s is stored as rejected with a storable payload", (_name, suffix, payload, reason) => {
    const c = core();
    const step = apply(c, message(suffix, payload, 5), 5);
    expect(step.rows.events).toHaveLength(1);
    const [event] = step.rows.events;
    expect(event.status).toBe("rejected");
    expect(event.reason).toMatch(reason);
    expect(event.rawPayload ?? "").not.toContain("\u0000");
    expect(step.core.state.counters.n).toBe(0);
  });

  it("a points report shares its boot's seq with pulses and is stepped like one", () => {
    let c = core();
    const kinds: string[] = [];
    let lastCovered = 0;
    for (const [i, [suffix, payload]] of ([
      ["points", { points: "P1", lies: "reverse", seq: 2, boot: "k" }],
      ["pulse", { detector: "D1", seq: 1, boot: "k" }],
    ] as const).entries()) {
      const step = apply(c, message(suffix, payload, 100 + i), 100 + i);
      c = step.core;
      kinds.push(...step.rows.events.map((e) => `${e.kind}:${e.status}`));
      for (const e of step.effects) if (e.type === "covered") lastCovered = e.seq;
    }
    expect(kinds).toEqual(["pulse:accepted", "points:accepted"]);
    expect(lastCovered).toBe(2);
  });

  it("a quiet trigger fires on the clock's tick; nextDue names its deadline", () => {
    let c = core();
    c = apply(c, message("pulse", { detector: "D1", seq: 1, boot: "k" }, 1000), 1000).core;
    expect(nextDue(c)).toBe(1500);
    const step = apply(c, { type: "tick" }, 1500);
    expect(step.rows.events.map((e) => e.kind)).toEqual(["tick"]);
    expect(step.core.state.counters.n).toBe(0);
  });

  it("a lamp-proving report that differs from the command raises an alarm", () => {
    const c = core();
    const rev = c.published.get("S1")!.rev;
    const step = apply(c, message("shown", { signal: "S1", aspect: "clear", rev }, 10), 10);
    expect(step.effects.filter((e) => e.type === "alarm").map((e) => e.type === "alarm" && e.kind)).toEqual(["lamp-proving"]);
    expect(step.core.lamps.S1.aspect).toBe("clear");
  });

  it("a signaller's hold is applied and audited; its caller is answered", () => {
    const c = core();
    const step = apply(c, { type: "command", body: { type: "hold", signal: "S1", reason: "shunting" }, user: { id: 7, name: "Sam" }, ref: 99 }, 20);
    expect(step.core.state.held).toEqual(["S1"]);
    expect(step.rows.audits.map((a) => a.action)).toEqual(["command-hold"]);
    expect(step.effects).toContainEqual({ type: "settle", ref: 99, error: null });
  });
});
