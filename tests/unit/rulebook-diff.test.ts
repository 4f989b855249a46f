import { describe, expect, it } from "vitest";
import { KESTREL_MAX_AXLES } from "@shared/demo/fernmoor";
import { kestrelTwoRoutesLayout } from "../fixtures/kestrelTwoRoutes";
import { countChanges, diffRulebooks, isEmptyDiff, type RulebookDiff } from "@shared/rulebook/diff";
import type { Rule, Rulebook } from "@shared/rulebook/schema";

/** A fresh two-route junction (the demo without its shed road) each time, so edits never leak between rows. */
function kestrel(): Rulebook {
  return structuredClone(kestrelTwoRoutesLayout().rulebook);
}

function ruleOf(rulebook: Rulebook, id: string): Rule {
  const rule = rulebook.rules.find((r) => r.id === id);
  if (!rule) throw new Error(`no rule ${id} in the rulebook`);
  return rule;
}

function moveRule(rulebook: Rulebook, id: string, to: number): void {
  const from = rulebook.rules.findIndex((r) => r.id === id);
  const [rule] = rulebook.rules.splice(from, 1);
  rulebook.rules.splice(to, 0, rule);
}

describe("diffRulebooks on identical rulebooks", () => {
  it.each([
    ["the same object", (r: Rulebook) => r],
    ["a deep copy", (r: Rulebook) => structuredClone(r)],
    [
      "a copy with object keys in another order",
      (r: Rulebook) => ({ ...r, rules: r.rules.map((rule) => Object.fromEntries(Object.entries(rule).reverse()) as Rule) }),
    ],
  ])("%s → empty diff", (_label, copy) => {
    const base = kestrel();
    const diff = diffRulebooks(base, copy(base));
    expect(isEmptyDiff(diff)).toBe(true);
    expect(diff).toEqual({ latches: [], counters: [], selectors: [], initial: [], rules: [], moved: [], proving: [] });
  });
});

type Row = [string, (r: Rulebook) => void, Partial<RulebookDiff>];

describe("diffRulebooks finds each kind of change in Kestrel Bank", () => {
  it.each<Row>([
    ["latch added", (r) => (r.latches.shuntLock = false), { latches: [{ change: "added", name: "shuntLock", after: false }] }],
    ["counter added", (r) => (r.counters.quarrySiding = 0), { counters: [{ change: "added", name: "quarrySiding", after: 0 }] }],
    ["counter removed", (r) => delete r.counters.branchApproach, { counters: [{ change: "removed", name: "branchApproach", before: 0 }] }],
    ["counter start changed", (r) => (r.counters.junction = 1), { counters: [{ change: "changed", name: "junction", before: 0, after: 1 }] }],
    [
      "selector values changed",
      (r) => r.selectors.route.values.push("shunt"),
      {
        selectors: [
          {
            change: "changed",
            name: "route",
            before: { values: ["none", "main", "branch"], initial: "none" },
            after: { values: ["none", "main", "branch", "shunt"], initial: "none" },
          },
        ],
      },
    ],
    [
      "selector added",
      (r) => (r.selectors.quarryRoad = { values: ["upper", "lower"], initial: "upper" }),
      { selectors: [{ change: "added", name: "quarryRoad", after: { values: ["upper", "lower"], initial: "upper" } }] },
    ],
    ["initial aspect changed", (r) => (r.initial.B1 = "caution"), { initial: [{ change: "changed", name: "B1", before: "danger", after: "caution" }] }],
    ["initial aspect removed", (r) => delete r.initial.M1, { initial: [{ change: "removed", name: "M1", before: "danger" }] }],
    [
      "proving priority changed",
      (r) => (r.proving!.priority = "branch"),
      { proving: [{ what: "setting", change: "changed", name: "priority", before: "main", after: "branch" }] },
    ],
    [
      "proving conflict removed",
      (r) => (r.proving!.conflicts = []),
      { proving: [{ what: "conflict", change: "removed", routes: ["main", "branch"] }] },
    ],
    [
      "proving route changed",
      (r) => r.proving!.routes[1].approach.push("BE"),
      {
        proving: [
          {
            what: "route",
            change: "changed",
            name: "branch",
            before: { id: "branch", signal: "B1", approach: ["BA"], entry: "BE", exit: ["JX"] },
            after: { id: "branch", signal: "B1", approach: ["BA", "BE"], entry: "BE", exit: ["JX"] },
          },
        ],
      },
    ],
    [
      "proving axles changed",
      (r) => (r.proving!.maxAxles = KESTREL_MAX_AXLES - 1),
      { proving: [{ what: "setting", change: "changed", name: "maxAxles", before: KESTREL_MAX_AXLES, after: KESTREL_MAX_AXLES - 1 }] },
    ],
  ])("%s", (_label, edit, expected) => {
    const base = kestrel();
    const after = kestrel();
    edit(after);
    const diff = diffRulebooks(base, after);
    expect(diff).toMatchObject(expected);
    expect(countChanges(diff)).toBe(Object.values(expected).flat().length);
  });

  it.each([
    [false, true, [{ change: "changed", name: "shuntLock", before: false, after: true }]],
    [true, undefined, [{ change: "removed", name: "shuntLock", before: true }]],
  ])("latch shuntLock starting %s, then %s", (start, then, expected) => {
    const before = kestrel();
    before.latches.shuntLock = start;
    const after = kestrel();
    if (then !== undefined) after.latches.shuntLock = then;
    expect(diffRulebooks(before, after).latches).toEqual(expected);
  });

  it("a whole proving block removed lists the block and what was in it", () => {
    const after = kestrel();
    delete after.proving;
    const diff = diffRulebooks(kestrel(), after);
    expect(diff.proving[0]).toEqual({ what: "block", change: "removed" });
    expect(diff.proving.filter((c) => c.what === "route").map((c) => c.change)).toEqual(["removed", "removed"]);
  });
});

describe("diffRulebooks on rules", () => {
  // Expected entries here are partial (toMatchObject), so they are not typed as full diff entries.
  it.each<[string, (r: Rulebook) => void, Record<string, unknown>]>([
    [
      "rule added",
      (r) => r.rules.push({ id: "quarry-bell", on: { quiet: "BA", ms: 30000 }, do: [{ alarm: "Quarry train waiting" }] }),
      {
        rules: [
          {
            change: "added",
            id: "quarry-bell",
            position: 12,
            rule: { id: "quarry-bell", on: { quiet: "BA", ms: 30000 }, do: [{ alarm: "Quarry train waiting" }] },
            sentence: 'When BA has been quiet for 30 s: raise the alarm "Quarry train waiting".',
          },
        ],
        moved: [],
      },
    ],
    [
      "rule removed",
      (r) => (r.rules = r.rules.filter((rule) => rule.id !== "main-passed-at-danger")),
      {
        rules: [
          {
            change: "removed",
            id: "main-passed-at-danger",
            position: 3,
            sentence:
              'When a wheelset passes ME, if route is not main: raise the alarm "An axle passed M1 while the main route was not set".',
          },
        ],
        // Every later rule shifts up one place, but that is not a move.
        moved: [],
      },
    ],
    [
      "trigger changed",
      (r) => (ruleOf(r, "leaves-JX").on = { pass: "ME" }),
      { rules: [{ change: "changed", id: "leaves-JX", parts: [{ part: "trigger", before: { pass: "JX" }, after: { pass: "ME" } }] }] },
    ],
    [
      "condition changed",
      (r) => {
        const rule = ruleOf(r, "give-branch");
        rule.if = { all: [{ selector: "route", is: "none" }, { count: "junction", op: "==", value: 0 }, { count: "branchApproach", op: ">=", value: 2 }] };
      },
      {
        rules: [
          {
            change: "changed",
            id: "give-branch",
            position: 11,
            parts: [
              {
                part: "condition",
                before: "route is none and junction is 0 and branchApproach is more than 0",
                after: "route is none and junction is 0 and branchApproach is at least 2",
              },
            ],
            before: "Whenever route is none and junction is 0 and branchApproach is more than 0: set route to branch, show clear on B1.",
            after: "Whenever route is none and junction is 0 and branchApproach is at least 2: set route to branch, show clear on B1.",
          },
        ],
      },
    ],
    [
      "condition dropped",
      (r) => delete ruleOf(r, "branch-passed-at-danger").if,
      { rules: [{ change: "changed", id: "branch-passed-at-danger", parts: [{ part: "condition", before: "route is not branch", after: null }] }] },
    ],
    [
      "actions changed",
      (r) => (ruleOf(r, "give-branch").do[1] = { show: "B1", aspect: "caution" }),
      {
        rules: [
          {
            change: "changed",
            id: "give-branch",
            parts: [
              { part: "actions", before: ["set route to branch", "show clear on B1"], after: ["set route to branch", "show caution on B1"] },
            ],
          },
        ],
      },
    ],
    [
      "note changed",
      (r) => (ruleOf(r, "main-approach").note = "An axle climbs towards M1."),
      {
        rules: [
          {
            change: "changed",
            id: "main-approach",
            parts: [{ part: "note", before: "An axle of a main train is on the approach to M1.", after: "An axle climbs towards M1." }],
          },
        ],
      },
    ],
    [
      "several parts of one rule changed",
      (r) => {
        const rule = ruleOf(r, "main-approach");
        rule.on = { pass: "BA" };
        rule.do = [{ add: "mainApproach", by: 2 }];
      },
      {
        rules: [
          {
            change: "changed",
            id: "main-approach",
            parts: [
              { part: "trigger", before: { pass: "MA" }, after: { pass: "BA" } },
              { part: "actions", before: ["add 1 to mainApproach"], after: ["add 2 to mainApproach"] },
            ],
          },
        ],
      },
    ],
  ])("%s", (_label, edit, expected) => {
    const after = kestrel();
    edit(after);
    expect(diffRulebooks(kestrel(), after)).toMatchObject(expected);
  });

  it.each<[string, (r: Rulebook) => void, { id: string; from: number; to: number; standing: boolean }[]]>([
    // give-branch ahead of give-main would hand the junction to the quarry branch first.
    ["standing rule give-branch put before give-main", (r) => moveRule(r, "give-branch", 9), [{ id: "give-branch", from: 11, to: 10, standing: true }]],
    ["standing rule main-released put last", (r) => moveRule(r, "main-released", 10), [{ id: "main-released", from: 8, to: 11, standing: true }]],
    ["pulse rule moved to the top", (r) => moveRule(r, "leaves-JX", 0), [{ id: "leaves-JX", from: 7, to: 1, standing: false }]],
  ])("%s → reported as moved, nothing else", (_label, edit, moved) => {
    const after = kestrel();
    edit(after);
    const diff = diffRulebooks(kestrel(), after);
    expect(diff.moved).toEqual(moved);
    expect(diff.rules).toEqual([]);
  });

  it("a rule both moved and reworded is listed under both", () => {
    const after = kestrel();
    moveRule(after, "give-branch", 9);
    ruleOf(after, "give-branch").note = "Quarry first.";
    const diff = diffRulebooks(kestrel(), after);
    expect(diff.moved.map((m) => m.id)).toEqual(["give-branch"]);
    expect(diff.rules).toMatchObject([{ change: "changed", id: "give-branch", position: 10, parts: [{ part: "note" }] }]);
  });

  it("leaves both rulebooks untouched", () => {
    const before = kestrel();
    const after = kestrel();
    moveRule(after, "give-main", 10);
    const snapshot = [structuredClone(before), structuredClone(after)];
    diffRulebooks(before, after);
    expect([before, after]).toEqual(snapshot);
  });
});
