import { describe, expect, it } from "vitest";
import {
  ACTION_KINDS,
  CONDITION_KINDS,
  TRIGGER_KINDS,
  actionKind,
  conditionKind,
  matchAction,
  triggerKind,
  type ActionCases,
} from "@shared/rulebook/kinds";
import type { Action, Condition, Trigger } from "@shared/rulebook/schema";

const CONDITIONS: Condition[] = [
  { latch: "a" },
  { count: "c", op: ">", value: 0 },
  { selector: "s", is: "v" },
  { aspect: "M1", is: "clear" },
  { points: "P1", lies: "reverse" },
  { not: { latch: "a" } },
  { all: [] },
  { any: [] },
];
const ACTIONS: Action[] = [
  { set: "a" },
  { clear: "a" },
  { add: "c", by: 1 },
  { zero: "c" },
  { select: "s", value: "v" },
  { show: "M1", aspect: "clear" },
  { throw: "P1", to: "reverse" },
  { alarm: "x" },
];
const TRIGGERS: Trigger[] = ["standing", { pass: "MA" }, { moved: "P1" }, { quiet: "MA", ms: 5 }];

describe("rulebook node kinds", () => {
  it("names every kind once, in the order the kind tables list them", () => {
    expect(CONDITIONS.map(conditionKind)).toEqual([...CONDITION_KINDS]);
    expect(ACTIONS.map(actionKind)).toEqual([...ACTION_KINDS]);
    expect(TRIGGERS.map(triggerKind)).toEqual([...TRIGGER_KINDS]);
  });

  it("a visitor without a handler for some kind does not compile", () => {
    // @ts-expect-error -- `throw` has no handler: adding a kind must be a compile error here.
    const partial: ActionCases<string> = { set: () => "", clear: () => "", add: () => "", zero: () => "", select: () => "", show: () => "", alarm: () => "" };
    expect(() => matchAction({ throw: "P1", to: "normal" }, partial)).toThrow();
  });
});
