import { describe, expect, it } from "vitest";
import { initialState, step, type Change, type EngineState } from "@shared/rulebook/engine";
import type { Action, Rulebook } from "@shared/rulebook/schema";

/** Runs one action as the only action of a pass rule at T, from a known state. */
function run(action: Action): { state: EngineState; changes: Change[] } {
  const rulebook: Rulebook = {
    format: "blocklight.rulebook/1",
    latches: { shuntLock: true, spareLock: false },
    counters: { axles: 2, empty: 0 },
    selectors: { route: { values: ["none", "main", "branch"], initial: "main" } },
    initial: { M1: "clear", B1: "danger" },
    rules: [{ id: "act", on: { pass: "T" }, do: [action] }],
  };
  return step(rulebook, initialState(rulebook), { type: "pulse", detector: "T", at: 5 });
}

type Row = [string, Action, (state: EngineState) => unknown, unknown, Partial<Change>[]];

const rows: Row[] = [
  ["set a clear latch", { set: "spareLock" }, (s) => s.latches.spareLock, true, [{ kind: "latch", name: "spareLock", from: false, to: true }]],
  ["set a set latch (no change)", { set: "shuntLock" }, (s) => s.latches.shuntLock, true, []],
  ["clear a set latch", { clear: "shuntLock" }, (s) => s.latches.shuntLock, false, [{ kind: "latch", name: "shuntLock", from: true, to: false }]],
  ["clear a clear latch (no change)", { clear: "spareLock" }, (s) => s.latches.spareLock, false, []],
  ["add a positive amount", { add: "axles", by: 3 }, (s) => s.counters.axles, 5, [{ kind: "counter", name: "axles", from: 2, to: 5 }]],
  ["add a negative amount", { add: "axles", by: -2 }, (s) => s.counters.axles, 0, [{ kind: "counter", name: "axles", from: 2, to: 0 }]],
  ["add 0 (no change)", { add: "axles", by: 0 }, (s) => s.counters.axles, 2, []],
  [
    "add below 0: floor and alarm",
    { add: "axles", by: -3 },
    (s) => s.counters.axles,
    0,
    [
      { kind: "alarm", name: "axles", to: "count-underflow" },
      { kind: "counter", name: "axles", from: 2, to: 0 },
    ],
  ],
  ["add below 0 from 0: alarm only", { add: "empty", by: -1 }, (s) => s.counters.empty, 0, [{ kind: "alarm", name: "empty", to: "count-underflow" }]],
  ["zero a counter", { zero: "axles" }, (s) => s.counters.axles, 0, [{ kind: "counter", name: "axles", from: 2, to: 0 }]],
  ["zero a zero counter (no change)", { zero: "empty" }, (s) => s.counters.empty, 0, []],
  ["select another value", { select: "route", value: "branch" }, (s) => s.selectors.route, "branch", [{ kind: "selector", name: "route", from: "main", to: "branch" }]],
  ["select the current value (no change)", { select: "route", value: "main" }, (s) => s.selectors.route, "main", []],
  [
    "show another aspect",
    { show: "M1", aspect: "danger" },
    (s) => s.wanted.M1,
    "danger",
    [
      { kind: "wanted", name: "M1", from: "clear", to: "danger" },
      { kind: "shown", name: "M1", from: "clear", to: "danger" },
    ],
  ],
  ["show the current aspect (no change)", { show: "B1", aspect: "danger" }, (s) => s.wanted.B1, "danger", []],
  ["alarm", { alarm: "Quarry gate open" }, (s) => s.faulted, null, [{ kind: "alarm", name: "act", to: "rule-alarm", detail: "Quarry gate open" }]],
];

describe("actions", () => {
  it.each(rows)("%s", (_name, action, read, expected, changes) => {
    const result = run(action);
    expect(read(result.state)).toEqual(expected);
    expect(result.changes).toHaveLength(changes.length);
    result.changes.forEach((change, index) => {
      expect(change).toMatchObject({ ...changes[index], rule: "act" });
    });
  });

  it("runs actions in list order", () => {
    const rulebook: Rulebook = {
      format: "blocklight.rulebook/1",
      latches: {},
      counters: { axles: 0 },
      selectors: {},
      initial: {},
      rules: [{ id: "seq", on: { pass: "T" }, do: [{ add: "axles", by: 5 }, { zero: "axles" }, { add: "axles", by: 1 }] }],
    };
    const { state, changes } = step(rulebook, initialState(rulebook), { type: "pulse", detector: "T", at: 1 });
    expect(state.counters.axles).toBe(1);
    expect(changes.map((c) => c.to)).toEqual([5, 0, 1]);
  });
});

describe("signaller commands", () => {
  const rulebook: Rulebook = {
    format: "blocklight.rulebook/1",
    latches: { shuntLock: false },
    counters: { axles: 3 },
    selectors: {},
    initial: { M1: "clear" },
    rules: [],
  };
  const start = initialState(rulebook);
  const by = { by: "signaller@fernmoor.example", reason: "shunt into the quarry siding" };

  it.each([
    ["hold", { command: "hold", signal: "M1" } as const, (s: EngineState) => s.held, ["M1"], ["held", "shown"]],
    ["hold of an unknown signal (ignored)", { command: "hold", signal: "Q9" } as const, (s: EngineState) => s.held, [], []],
    ["release of a free signal (no change)", { command: "release", signal: "M1" } as const, (s: EngineState) => s.held, [], []],
    ["set", { command: "set", latch: "shuntLock" } as const, (s: EngineState) => s.latches.shuntLock, true, ["latch"]],
    ["clear of a clear latch (no change)", { command: "clear", latch: "shuntLock" } as const, (s: EngineState) => s.latches.shuntLock, false, []],
    ["set of an undeclared latch (ignored)", { command: "set", latch: "ghost" } as const, (s: EngineState) => s.latches, { shuntLock: false }, []],
    ["zero", { command: "zero", counter: "axles" } as const, (s: EngineState) => s.counters.axles, 0, ["counter"]],
    ["zero of an undeclared counter (ignored)", { command: "zero", counter: "ghost" } as const, (s: EngineState) => s.counters, { axles: 3 }, []],
    ["restart from the start (no change)", { command: "restart" } as const, (s: EngineState) => s.counters.axles, 3, []],
  ])("%s", (_name, command, read, expected, kinds) => {
    const { state, changes } = step(rulebook, start, { type: "command", at: 10, ...by, ...command });
    expect(read(state)).toEqual(expected);
    expect(changes.map((c) => c.kind)).toEqual(kinds);
    for (const change of changes) expect(change).toMatchObject({ command: command.command, detail: by.reason });
  });

  it("hold of a held signal is a no-op; release shows the wanted aspect again", () => {
    const held = step(rulebook, start, { type: "command", at: 1, command: "hold", signal: "M1" }).state;
    const again = step(rulebook, held, { type: "command", at: 2, command: "hold", signal: "M1" });
    expect(again.changes).toEqual([]);
    expect(again.state.held).toEqual(["M1"]);
    const released = step(rulebook, held, { type: "command", at: 3, command: "release", signal: "M1" });
    expect(released.state.held).toEqual([]);
    expect(released.changes).toEqual([
      { kind: "held", name: "M1", from: true, to: false, command: "release" },
      { kind: "shown", name: "M1", from: "danger", to: "clear", command: "release" },
    ]);
  });

  it("restart puts declared values back but keeps holds", () => {
    let state = step(rulebook, start, { type: "command", at: 1, command: "zero", counter: "axles" }).state;
    state = step(rulebook, state, { type: "command", at: 2, command: "hold", signal: "M1" }).state;
    const { state: after, changes } = step(rulebook, state, { type: "command", at: 3, command: "restart" });
    expect(after.counters.axles).toBe(3);
    expect(after.held).toEqual(["M1"]);
    expect(changes).toEqual([{ kind: "counter", name: "axles", from: 0, to: 3, command: "restart" }]);
  });
});
