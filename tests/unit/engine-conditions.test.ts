import { describe, expect, it } from "vitest";
import { initialState, step } from "@shared/rulebook/engine";
import type { Condition, Rulebook } from "@shared/rulebook/schema";

/**
 * A rulebook whose only event rule sets the latch `hit` when a wheelset passes T and the
 * condition under test holds. The other declarations give the condition something to read:
 * shuntLock set, spareLock clear, axles = 2, route = main, M1 asked to show clear.
 */
function probe(condition: Condition | undefined, standing = false): Rulebook {
  return {
    format: "blocklight.rulebook/1",
    latches: { shuntLock: true, spareLock: false, hit: false },
    counters: { axles: 2 },
    selectors: { route: { values: ["none", "main", "branch"], initial: "main" } },
    initial: { M1: "clear", B1: "danger" },
    rules: standing
      ? [{ id: "probe", on: "standing", if: condition, do: [{ set: "hit" }] }]
      : [{ id: "probe", on: { pass: "T" }, if: condition, do: [{ set: "hit" }] }],
  };
}

function holds(condition: Condition | undefined): boolean {
  const rulebook = probe(condition);
  const { state } = step(rulebook, initialState(rulebook), { type: "pulse", detector: "T", at: 10 });
  return state.latches.hit;
}

const rows: [string, Condition | undefined, boolean][] = [
  ["absent condition", undefined, true],
  ["latch that is set", { latch: "shuntLock" }, true],
  ["latch that is clear", { latch: "spareLock" }, false],
  ["count == (equal)", { count: "axles", op: "==", value: 2 }, true],
  ["count == (different)", { count: "axles", op: "==", value: 3 }, false],
  ["count != (different)", { count: "axles", op: "!=", value: 3 }, true],
  ["count != (equal)", { count: "axles", op: "!=", value: 2 }, false],
  ["count > (less)", { count: "axles", op: ">", value: 1 }, true],
  ["count > (equal)", { count: "axles", op: ">", value: 2 }, false],
  ["count >= (equal)", { count: "axles", op: ">=", value: 2 }, true],
  ["count >= (more)", { count: "axles", op: ">=", value: 3 }, false],
  ["count < (more)", { count: "axles", op: "<", value: 3 }, true],
  ["count < (equal)", { count: "axles", op: "<", value: 2 }, false],
  ["count <= (equal)", { count: "axles", op: "<=", value: 2 }, true],
  ["count <= (less)", { count: "axles", op: "<=", value: 1 }, false],
  ["selector is its value", { selector: "route", is: "main" }, true],
  ["selector is another value", { selector: "route", is: "branch" }, false],
  ["aspect asked for", { aspect: "M1", is: "clear" }, true],
  ["aspect not asked for", { aspect: "M1", is: "danger" }, false],
  ["aspect of another signal", { aspect: "B1", is: "danger" }, true],
  ["not (false)", { not: { latch: "spareLock" } }, true],
  ["not (true)", { not: { latch: "shuntLock" } }, false],
  ["all (every part true)", { all: [{ latch: "shuntLock" }, { selector: "route", is: "main" }, { count: "axles", op: ">", value: 0 }] }, true],
  ["all (one part false)", { all: [{ latch: "shuntLock" }, { selector: "route", is: "none" }] }, false],
  ["all (four parts, last false)", { all: [{ latch: "shuntLock" }, { latch: "shuntLock" }, { latch: "shuntLock" }, { latch: "spareLock" }] }, false],
  ["all (empty)", { all: [] }, true],
  ["any (one part true)", { any: [{ latch: "spareLock" }, { aspect: "M1", is: "clear" }] }, true],
  ["any (every part false)", { any: [{ latch: "spareLock" }, { count: "axles", op: "==", value: 0 }] }, false],
  ["any (empty)", { any: [] }, false],
  ["nested", { not: { any: [{ latch: "spareLock" }, { all: [{ latch: "shuntLock" }, { selector: "route", is: "branch" }] }] } }, true],
];

describe("conditions in a pass rule", () => {
  it.each(rows)("%s → %s", (_name, condition, expected) => {
    expect(holds(condition)).toBe(expected);
  });
});

describe("conditions in a standing rule (checked at start)", () => {
  it.each(rows)("%s → %s", (_name, condition, expected) => {
    expect(initialState(probe(condition, true)).latches.hit).toBe(expected);
  });
});

describe("pass rules are selected on the state before the pulse", () => {
  it("a rule made true by an earlier rule on the same pulse does not run", () => {
    const rulebook: Rulebook = {
      format: "blocklight.rulebook/1",
      latches: { first: false, second: false },
      counters: {},
      selectors: {},
      initial: {},
      rules: [
        { id: "a", on: { pass: "T" }, do: [{ set: "first" }] },
        { id: "b", on: { pass: "T" }, if: { latch: "first" }, do: [{ set: "second" }] },
      ],
    };
    const once = step(rulebook, initialState(rulebook), { type: "pulse", detector: "T", at: 1 }).state;
    expect(once.latches).toEqual({ first: true, second: false });
    const twice = step(rulebook, once, { type: "pulse", detector: "T", at: 2 }).state;
    expect(twice.latches).toEqual({ first: true, second: true });
  });

  it("a rule made false by an earlier rule on the same pulse still runs", () => {
    const rulebook: Rulebook = {
      format: "blocklight.rulebook/1",
      latches: { armed: true, fired: false },
      counters: {},
      selectors: {},
      initial: {},
      rules: [
        { id: "disarm", on: { pass: "T" }, do: [{ clear: "armed" }] },
        { id: "fire", on: { pass: "T" }, if: { latch: "armed" }, do: [{ set: "fired" }] },
      ],
    };
    const { state, changes } = step(rulebook, initialState(rulebook), { type: "pulse", detector: "T", at: 1 });
    expect(state.latches).toEqual({ armed: false, fired: true });
    expect(changes.map((c) => c.rule)).toEqual(["disarm", "fire"]);
  });
});
