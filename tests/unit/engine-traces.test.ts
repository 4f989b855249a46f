import { describe, expect, it } from "vitest";
import { kestrelTwoRoutesLayout } from "../fixtures/kestrelTwoRoutes";
import { initialState, shownAspects, step, type Change, type EngineInput, type EngineState } from "@shared/rulebook/engine";
import type { Rulebook } from "@shared/rulebook/schema";

const kestrel = kestrelTwoRoutesLayout().rulebook;

/** Plays pulses one second apart (or the given inputs) and keeps every step. */
function play(rulebook: Rulebook, inputs: (string | EngineInput)[], from?: EngineState) {
  let state = from ?? initialState(rulebook);
  let at = state.clock;
  const steps: { state: EngineState; changes: Change[]; shown: Record<string, string> }[] = [];
  for (const input of inputs) {
    at += 1000;
    const event: EngineInput = typeof input === "string" ? { type: "pulse", detector: input, at } : input;
    const result = step(rulebook, state, event);
    state = result.state;
    steps.push({ ...result, shown: shownAspects(rulebook, state) });
  }
  return { state, steps, shown: shownAspects(rulebook, state) };
}

const aspects = (steps: { shown: Record<string, string> }[]) => steps.map((s) => `${s.shown.M1}/${s.shown.B1}`);

describe("Kestrel Bank traces", () => {
  it("starts with both signals at danger and the junction free", () => {
    const state = initialState(kestrel);
    expect(shownAspects(kestrel, state)).toEqual({ M1: "danger", B1: "danger" });
    expect(state.selectors.route).toBe("none");
  });

  it("a two-axle main train: clear on the first axle, danger behind it, free when the last axle leaves", () => {
    const { steps, state } = play(kestrel, ["MA", "MA", "ME", "ME", "JX", "JX"]);
    expect(aspects(steps)).toEqual(["clear/danger", "clear/danger", "danger/danger", "danger/danger", "danger/danger", "danger/danger"]);
    expect(steps[3].state.counters.junction).toBe(2);
    expect(steps[4].state.selectors.route).toBe("main");
    expect(state.selectors.route).toBe("none");
    expect(state.counters).toEqual({ junction: 0, mainApproach: 0, branchApproach: 0 });
  });

  it("a following main train waits until the first has left the junction", () => {
    const { steps } = play(kestrel, ["MA", "MA", "MA", "ME", "ME", "MA", "JX", "JX", "ME", "ME", "JX", "JX"]);
    expect(aspects(steps)).toEqual([
      "clear/danger", // T1 axle 1 on approach
      "clear/danger",
      "clear/danger", // T2 axle 1 on approach behind T1
      "danger/danger", // T1 passes M1
      "danger/danger",
      "danger/danger", // T2 axle 2
      "danger/danger",
      "clear/danger", // T1 has left: T2 gets the junction
      "danger/danger",
      "danger/danger",
      "danger/danger",
      "danger/danger",
    ]);
    const release = steps[7].changes.filter((c) => c.kind === "selector").map((c) => `${c.rule}:${c.to}`);
    expect(release).toEqual(["main-released:none", "give-main:main"]);
  });

  it("a tie at release goes to the main line (priority), then the branch", () => {
    const { steps } = play(kestrel, ["BA", "BE", "MA", "BE", "JX", "JX", "ME", "JX"]);
    expect(aspects(steps)).toEqual([
      "danger/clear", // a branch train alone gets the junction
      "danger/danger",
      "danger/danger", // main train waits: junction occupied
      "danger/danger",
      "danger/danger",
      "clear/danger", // junction free: main first
      "danger/danger",
      "danger/danger",
    ]);
    const tie = play(kestrel, ["MA", "ME", "BA", "MA", "JX"]);
    // Both a main and a branch train wait when the junction frees: main wins.
    expect(tie.shown).toEqual({ M1: "clear", B1: "danger" });
    const after = play(kestrel, ["ME", "JX"], tie.state);
    expect(after.shown).toEqual({ M1: "danger", B1: "clear" });
  });

  it("a hold during a movement shows danger without changing the logic, and release restores it", () => {
    const approach = play(kestrel, ["MA", "MA"]);
    const held = play(kestrel, [{ type: "command", at: 5000, command: "hold", signal: "M1", reason: "shunt" }], approach.state);
    expect(held.shown.M1).toBe("danger");
    expect(held.state.wanted.M1).toBe("clear");
    expect(held.steps[0].changes).toContainEqual({ kind: "shown", name: "M1", from: "clear", to: "danger", command: "hold", detail: "shunt" });
    const released = play(kestrel, [{ type: "command", at: 9000, command: "release", signal: "M1" }], held.state);
    expect(released.shown.M1).toBe("clear");
    // A hold changes what is shown, not what the rules see: the branch still waits.
    const branchMeanwhile = play(kestrel, ["BA"], held.state);
    expect(branchMeanwhile.shown).toEqual({ M1: "danger", B1: "danger" });
  });

  it("counts never go below zero: an extra exit pulse raises an underflow alarm", () => {
    const { steps, state } = play(kestrel, ["JX"]);
    expect(state.counters.junction).toBe(0);
    expect(steps[0].changes).toEqual([
      { kind: "alarm", name: "junction", from: null, to: "count-underflow", rule: "leaves-JX", detail: expect.stringContaining("below 0") },
    ]);
  });

  it("an axle passing a signal at danger raises an alarm", () => {
    const { steps } = play(kestrel, ["BE"]);
    expect(steps[0].changes.filter((c) => c.kind === "alarm")).toEqual([
      expect.objectContaining({ name: "branchApproach", to: "count-underflow", rule: "branch-enters" }),
      expect.objectContaining({ rule: "branch-passed-at-danger", to: "rule-alarm" }),
    ]);
  });
});

describe("quiet triggers", () => {
  const rulebook: Rulebook = {
    ...kestrel,
    latches: { mainSilent: false },
    rules: [
      ...kestrel.rules,
      { id: "main-silent", on: { quiet: "MA", ms: 60_000 }, if: { count: "mainApproach", op: ">", value: 0 }, do: [{ set: "mainSilent" }] },
      { id: "main-stopped", on: { quiet: "MA", ms: 60_000 }, do: [{ alarm: "Main train has not moved for a minute" }] },
      { id: "bank-quiet", on: { quiet: "ME", ms: 30_000 }, do: [{ clear: "mainSilent" }] },
    ],
  };

  it("is armed by a pulse and fired by a tick once due, in rule order for equal deadlines", () => {
    let state = step(rulebook, initialState(rulebook, 0), { type: "pulse", detector: "MA", at: 1_000 }).state;
    expect(state.quiet).toEqual({ "main-silent": 61_000, "main-stopped": 61_000 });
    const early = step(rulebook, state, { type: "tick", at: 60_999 });
    expect(early.changes).toEqual([]);
    const due = step(rulebook, early.state, { type: "tick", at: 61_000 });
    state = due.state;
    expect(state.latches.mainSilent).toBe(true);
    expect(state.quiet).toEqual({});
    expect(due.changes.map((c) => `${c.kind}:${c.rule}`)).toEqual([
      "quiet:main-silent",
      "latch:main-silent",
      "quiet:main-stopped",
      "alarm:main-stopped",
    ]);
    // Disarmed: it does not fire again.
    expect(step(rulebook, state, { type: "tick", at: 200_000 }).changes).toEqual([]);
  });

  it("a new pulse re-arms it", () => {
    let state = step(rulebook, initialState(rulebook, 0), { type: "pulse", detector: "MA", at: 1_000 }).state;
    state = step(rulebook, state, { type: "pulse", detector: "MA", at: 50_000 }).state;
    expect(state.quiet["main-silent"]).toBe(110_000);
    expect(step(rulebook, state, { type: "tick", at: 61_000 }).changes).toEqual([]);
  });

  it("is fired by a later input before that input is applied, earliest deadline first", () => {
    let state = step(rulebook, initialState(rulebook, 0), { type: "pulse", detector: "MA", at: 1_000 }).state;
    state = step(rulebook, state, { type: "pulse", detector: "ME", at: 2_000 }).state; // bank-quiet due 32 000
    expect(state.counters.mainApproach).toBe(0);
    state = step(rulebook, state, { type: "pulse", detector: "MA", at: 3_000 }).state; // main-* due 63 000
    const { state: after, changes } = step(rulebook, state, { type: "pulse", detector: "BA", at: 100_000 });
    const order = changes.filter((c) => c.kind === "quiet").map((c) => c.rule);
    expect(order).toEqual(["bank-quiet", "main-silent", "main-stopped"]);
    // main-silent fired while mainApproach was still 1 (before the BA pulse): latch set.
    expect(after.latches.mainSilent).toBe(true);
    expect(changes.findIndex((c) => c.rule === "branch-approach")).toBeGreaterThan(changes.findIndex((c) => c.rule === "main-stopped"));
  });
});

describe("rule loop", () => {
  const looping: Rulebook = {
    ...kestrel,
    latches: { flip: false },
    rules: [
      ...kestrel.rules,
      { id: "flip-on", on: "standing", if: { all: [{ not: { latch: "flip" } }, { count: "branchApproach", op: ">", value: 0 }] }, do: [{ set: "flip" }] },
      { id: "flip-off", on: "standing", if: { all: [{ latch: "flip" }, { count: "branchApproach", op: ">", value: 0 }] }, do: [{ clear: "flip" }] },
    ],
  };

  it("faults the rulebook: every signal at danger, an alarm, no rules until restart", () => {
    const approach = play(looping, ["MA"]);
    expect(approach.shown.M1).toBe("clear");
    const loop = play(looping, ["BA"], approach.state);
    const { changes } = loop.steps[0];
    expect(loop.state.faulted).toMatchObject({ reason: expect.stringContaining("rule loop") });
    expect(loop.shown).toEqual({ M1: "danger", B1: "danger" });
    expect(changes.filter((c) => c.kind === "latch")).toHaveLength(64);
    expect(changes.slice(-3)).toEqual([
      expect.objectContaining({ kind: "shown", name: "M1", from: "clear", to: "danger" }),
      expect.objectContaining({ kind: "fault", name: "rulebook", from: null }),
      expect.objectContaining({ kind: "alarm", name: "rulebook", to: "rule-loop" }),
    ]);

    // Pulses are ignored while faulted (the clock still moves).
    const ignored = play(looping, ["ME"], loop.state);
    expect(ignored.steps[0].changes).toEqual([]);
    expect(ignored.state.counters).toEqual(loop.state.counters);
    expect(ignored.state.clock).toBeGreaterThan(loop.state.clock);

    // Restart clears the fault and goes back to the declared values.
    const restarted = step(looping, ignored.state, { type: "command", at: 99_000, command: "restart", reason: "after the loop" });
    expect(restarted.state.faulted).toBeNull();
    expect(restarted.state.counters).toEqual({ junction: 0, mainApproach: 0, branchApproach: 0 });
    expect(shownAspects(looping, restarted.state)).toEqual({ M1: "danger", B1: "danger" });
    expect(restarted.changes).toContainEqual(expect.objectContaining({ kind: "fault", to: null, command: "restart" }));
  });

  it("a rulebook that loops at start is faulted from the start", () => {
    const always: Rulebook = {
      format: "blocklight.rulebook/1",
      latches: { flip: false },
      counters: {},
      selectors: {},
      initial: { M1: "clear" },
      rules: [
        { id: "on", on: "standing", if: { not: { latch: "flip" } }, do: [{ set: "flip" }] },
        { id: "off", on: "standing", if: { latch: "flip" }, do: [{ clear: "flip" }] },
      ],
    };
    const state = initialState(always);
    expect(state.faulted).not.toBeNull();
    expect(shownAspects(always, state)).toEqual({ M1: "danger" });
  });

  it("a settle of exactly 64 runs is not a loop", () => {
    const rules: Rulebook["rules"] = Array.from({ length: 64 }, (_, i) => ({
      id: `count-${i}`,
      on: "standing" as const,
      if: { count: "n", op: "==" as const, value: i },
      do: [{ add: "n", by: 1 }],
    }));
    const rulebook: Rulebook = { format: "blocklight.rulebook/1", latches: {}, counters: { n: 0 }, selectors: {}, initial: {}, rules };
    expect(initialState(rulebook)).toMatchObject({ faulted: null, counters: { n: 64 } });
    const longer = { ...rulebook, rules: [...rules, { id: "one-more", on: "standing" as const, if: { count: "n", op: "==" as const, value: 64 }, do: [{ add: "n", by: 1 }] }] };
    expect(initialState(longer).faulted).not.toBeNull();
  });

  it("a standing rule whose actions would change nothing does not run", () => {
    const rulebook: Rulebook = {
      format: "blocklight.rulebook/1",
      latches: { on: true },
      counters: { n: 0 },
      selectors: {},
      initial: {},
      rules: [
        { id: "noop-set", on: "standing", if: { latch: "on" }, do: [{ set: "on" }] },
        { id: "net-zero", on: "standing", do: [{ add: "n", by: 1 }, { add: "n", by: -1 }] },
        { id: "floor", on: "standing", do: [{ add: "n", by: -1 }] },
      ],
    };
    const { state, changes } = step(rulebook, initialState(rulebook), { type: "tick", at: 1 });
    expect(state.faulted).toBeNull();
    expect(changes).toEqual([]);
  });
});
