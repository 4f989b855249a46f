import { describe, expect, it } from "vitest";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { describeAction, describeCondition, describeRule, describeTriggerAlone } from "@shared/rulebook/describe";
import type { Action, Condition, Rule } from "@shared/rulebook/schema";

describe("describeCondition", () => {
  it.each([
    [{ latch: "shuntLock" }, "shuntLock is set"],
    [{ count: "junction", op: "==", value: 0 }, "junction is 0"],
    [{ count: "junction", op: "!=", value: 0 }, "junction is not 0"],
    [{ count: "mainApproach", op: ">", value: 0 }, "mainApproach is more than 0"],
    [{ count: "mainApproach", op: ">=", value: 2 }, "mainApproach is at least 2"],
    [{ count: "mainApproach", op: "<", value: 2 }, "mainApproach is less than 2"],
    [{ count: "mainApproach", op: "<=", value: 2 }, "mainApproach is at most 2"],
    [{ selector: "route", is: "none" }, "route is none"],
    [{ aspect: "M1", is: "clear" }, "M1 is asked to show clear"],
    [{ not: { latch: "shuntLock" } }, "shuntLock is not set"],
    [{ not: { selector: "route", is: "main" } }, "route is not main"],
    [{ not: { aspect: "M1", is: "danger" } }, "M1 is not asked to show danger"],
    [{ not: { count: "junction", op: "==", value: 0 } }, "it is not the case that junction is 0"],
    [{ all: [{ latch: "a" }, { latch: "b" }] }, "a is set and b is set"],
    [{ any: [{ latch: "a" }, { latch: "b" }] }, "a is set or b is set"],
    [{ all: [{ latch: "a" }, { any: [{ latch: "b" }, { latch: "c" }] }] }, "a is set and (b is set or c is set)"],
    [{ all: [] }, "always"],
    [{ any: [] }, "never"],
  ] as [Condition, string][])("%j → %s", (condition, text) => {
    expect(describeCondition(condition)).toBe(text);
  });
});

describe("describeAction", () => {
  it.each([
    [{ set: "shuntLock" }, "set shuntLock"],
    [{ clear: "shuntLock" }, "clear shuntLock"],
    [{ add: "junction", by: 1 }, "add 1 to junction"],
    [{ add: "junction", by: -1 }, "take 1 from junction"],
    [{ zero: "junction" }, "set junction to 0"],
    [{ select: "route", value: "main" }, "set route to main"],
    [{ show: "M1", aspect: "clear" }, "show clear on M1"],
    [{ alarm: "Quarry gate open" }, 'raise the alarm "Quarry gate open"'],
  ] as [Action, string][])("%j → %s", (action, text) => {
    expect(describeAction(action)).toBe(text);
  });
});

describe("describeRule", () => {
  it.each([
    [{ on: { pass: "MA" }, do: [{ add: "mainApproach", by: 1 }] }, "When a wheelset passes MA: add 1 to mainApproach."],
    [
      {
        on: "standing",
        if: { all: [{ selector: "route", is: "none" }, { count: "junction", op: "==", value: 0 }, { count: "mainApproach", op: ">", value: 0 }] },
        do: [{ select: "route", value: "main" }, { show: "M1", aspect: "clear" }],
      },
      "Whenever route is none and junction is 0 and mainApproach is more than 0: set route to main, show clear on M1.",
    ],
    [{ on: { pass: "ME" }, if: { not: { selector: "route", is: "main" } }, do: [{ alarm: "Passed M1" }] }, 'When a wheelset passes ME, if route is not main: raise the alarm "Passed M1".'],
    [{ on: { quiet: "MA", ms: 60000 }, do: [{ set: "stuck" }] }, "When MA has been quiet for 60 s: set stuck."],
    [{ on: { quiet: "MA", ms: 1500 }, do: [] }, "When MA has been quiet for 1500 ms: do nothing."],
    [{ on: "standing", do: [{ set: "ready" }] }, "Whenever the rulebook settles: set ready."],
  ] as [Pick<Rule, "on" | "if" | "do">, string][])("%s", (rule, text) => {
    expect(describeRule(rule)).toBe(text);
  });

  it("describes every Kestrel Bank rule as one sentence", () => {
    for (const rule of kestrelBankLayout().rulebook.rules) expect(describeRule(rule)).toMatch(/^(When|Whenever) [^\n]+\.$/);
  });
});

describe("describeTriggerAlone", () => {
  it.each([
    ["standing" as const, "Whenever the rulebook settles (standing rule)"],
    [{ pass: "MA" }, "When a wheelset passes MA"],
    [{ quiet: "JX", ms: 4000 }, "When JX has been quiet for 4 s"],
  ])("%j reads %j", (trigger, words) => {
    expect(describeTriggerAlone(trigger)).toBe(words);
  });
});
