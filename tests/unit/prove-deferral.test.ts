/**
 * Which groups' stream axles the prover defers (shared/rulebook/proving/deferral.ts): the
 * templates and the demo defer every route they can, and each change to a rulebook that could
 * make one more axle on the approach matter turns that route's deferral off and leaves the
 * others on. The random tests in prove-reductions.test.ts compare verdicts; these pin the static
 * checks one by one, so that dropping any of them fails here. The last case shows why a check is
 * needed: a rule that reads "two axles waiting" is refuted only when those axles are not deferred.
 */
import { describe, expect, it } from "vitest";
import { kestrelBankLayout, wrenfoldLoopLayout } from "@shared/demo/fernmoor";
import { prove } from "@shared/rulebook/prove";
import { deferrableGroups } from "@shared/rulebook/proving/deferral";
import { compileModel } from "@shared/rulebook/proving/model";
import type { Action, Rule, Rulebook } from "@shared/rulebook/schema";
import { convergingJunction } from "@shared/rulebook/templates";
import { threeRoutes } from "../fixtures/junctions";

function twoRoutes(maxAxles = 2, maxTrainsPerRoute = 2): Rulebook {
  return convergingJunction({
    routes: [
      { id: "main", signal: "M1", approach: ["MA"], entry: "ME", exit: ["JX"] },
      { id: "branch", signal: "B1", approach: ["BA"], entry: "BE", exit: ["JX"] },
    ],
    order: "priority",
    priority: "main",
    maxAxles,
    maxTrainsPerRoute,
  });
}

/** Route id → whether its group's stream axles are deferred. */
function deferredRoutes(rulebook: Rulebook): Record<string, boolean> {
  const model = compileModel(rulebook);
  const mask = deferrableGroups(model);
  return Object.fromEntries(model.routes.map((r) => [r.id, (mask & (1 << r.group)) !== 0]));
}

function withRules(rulebook: Rulebook, edit: (rules: Rule[]) => Rule[]): Rulebook {
  return { ...rulebook, rules: edit(rulebook.rules.map((r) => ({ ...r, do: [...r.do] }))) };
}

function editRule(rulebook: Rulebook, id: string, edit: (rule: Rule) => Rule): Rulebook {
  const out = withRules(rulebook, (rules) => rules.map((r) => (r.id === id ? edit(r) : r)));
  expect(out.rules.some((r) => r.id === id), `no rule ${id}`).toBe(true);
  return out;
}

/** Every `add` on the approach counters multiplied by `step`. */
function stepped(rulebook: Rulebook, step: number): Rulebook {
  const approach = ["mainApproach", "branchApproach"];
  const scale = (a: Action): Action => ("add" in a && approach.includes(a.add) ? { add: a.add, by: a.by * step } : a);
  return withRules(rulebook, (rules) => rules.map((r) => ({ ...r, do: r.do.map(scale) })));
}

const standing = (id: string, rule: Omit<Rule, "id" | "on">): Rule => ({ id, on: "standing", ...rule });

describe("the groups whose stream axles are deferred", () => {
  it("are every route of the converging template and of Kestrel Bank", () => {
    expect(deferredRoutes(twoRoutes())).toEqual({ main: true, branch: true });
    const three = convergingJunction({
      routes: threeRoutes(),
      order: "first-come",
      maxAxles: 2,
      maxTrainsPerRoute: 2,
    });
    expect(deferredRoutes(three)).toEqual({ up: true, down: true, goods: true });
    expect(Object.values(deferredRoutes(kestrelBankLayout().rulebook))).toEqual([true, true, true]);
    expect(deferredRoutes(stepped(twoRoutes(), 2))).toEqual({ main: true, branch: true });
  });

  it("are none on Wrenfold Loop, whose entry rules take the approach count off under a condition (the road set)", () => {
    const rulebook = wrenfoldLoopLayout().rulebook;
    expect(Object.values(deferredRoutes(rulebook)).some((d) => d)).toBe(false);
  });

  const base = twoRoutes();
  const turnsMainOff: [string, Rulebook][] = [
    ["a rule reads two axles waiting (count ≥ 2)", withRules(base, (rules) => [...rules, standing("two-waiting", { if: { count: "mainApproach", op: ">=", value: 2 }, do: [{ alarm: "two" }] })])],
    ["a rule reads exactly one axle waiting (count == 1)", withRules(base, (rules) => [...rules, standing("one-waiting", { if: { count: "mainApproach", op: "==", value: 1 }, do: [{ alarm: "one" }] })])],
    [
      "with a step of 2, a rule reads the count as exactly 2",
      withRules(stepped(base, 2), (rules) => [...rules, standing("two", { if: { count: "mainApproach", op: "==", value: 2 }, do: [{ alarm: "two" }] })]),
    ],
    ["the approach rule also shows an aspect", editRule(base, "main-approach", (r) => ({ ...r, do: [...r.do, { show: "M1", aspect: "danger" }] }))],
    [
      "the approach rule also sets a latch",
      { ...editRule(base, "main-approach", (r) => ({ ...r, do: [...r.do, { set: "seen" }] })), latches: { ...base.latches, seen: false } },
    ],
    ["the approach rule takes off instead of adding", editRule(base, "main-approach", (r) => ({ ...r, do: [{ add: "mainApproach", by: -1 }] }))],
    ["the approach rule has a condition", editRule(base, "main-approach", (r) => ({ ...r, if: { aspect: "B1", is: "danger" } }))],
    ["a quiet rule watches the approach detector", withRules(base, (rules) => [...rules, { id: "quiet-MA", on: { quiet: "MA", ms: 5000 }, do: [{ alarm: "quiet" }] }])],
    ["the counter is zeroed elsewhere", withRules(base, (rules) => [...rules, { id: "reset", on: { pass: "JX" }, do: [{ zero: "mainApproach" }] }])],
    ["the counter is changed by another detector", withRules(base, (rules) => [...rules, { id: "odd", on: { pass: "JX" }, do: [{ add: "mainApproach", by: 1 }] }])],
    ["the counter does not start at 0", { ...base, counters: { ...base.counters, mainApproach: 1 } }],
    [
      "entry takes the counter off only under a condition",
      withRules(base, (rules) => [
        ...rules.map((r) => (r.id === "main-enters" ? { ...r, do: r.do.filter((a) => !("add" in a && a.add === "mainApproach")) } : r)),
        { id: "main-enters-if", on: { pass: "ME" }, if: { aspect: "M1", is: "danger" }, do: [{ add: "mainApproach", by: -1 }] },
      ]),
    ],
    ["entry takes off less than the approach adds", editRule(base, "main-enters", (r) => ({ ...r, do: r.do.map((a) => ("add" in a && a.add === "mainApproach" ? { add: a.add, by: 0 } : a)) }))],
    [
      "another route passes the approach detector",
      { ...base, proving: { ...base.proving!, routes: base.proving!.routes.map((r) => (r.id === "branch" ? { ...r, exit: ["JX", "MA"] } : r)) } },
    ],
  ];

  it.each(turnsMainOff)("leave out main when %s, and keep branch", (_, rulebook) => {
    expect(deferredRoutes(rulebook)).toEqual({ main: false, branch: true });
  });

  it("keep main when a rule reads the count only as some (count > 0, ≥ 1, < 1, != 0)", () => {
    const reads = (["> 0", ">= 1", "< 1", "!= 0"] as const).map((text, i): Rule => {
      const [op, value] = text.split(" ");
      return standing(`reads-${i}`, { if: { count: "mainApproach", op: op as ">", value: Number(value) }, do: [{ alarm: text }] });
    });
    expect(deferredRoutes(withRules(base, (rules) => [...rules, ...reads]))).toEqual({ main: true, branch: true });
  });
});

describe("deferral and what it may not hide", () => {
  it("a rule that acts on two main axles waiting while branch has the junction is refuted, as by the search without deferral", () => {
    // Two axles on main's approach while the branch route is set: nothing can be deferred then
    // (main is not ready), and this rule clears M1 against the branch train.
    const rulebook = withRules(twoRoutes(2, 1), (rules) => [
      ...rules,
      standing("hurry-main", {
        if: { all: [{ count: "mainApproach", op: ">=", value: 2 }, { selector: "route", is: "branch" }] },
        do: [{ show: "M1", aspect: "clear" }],
      }),
    ]);
    const reduced = prove(rulebook);
    const full = prove(rulebook, { noDeferral: true });
    const plain = prove(rulebook, { plain: true });
    const refuted = (r: typeof reduced) => r.properties.filter((p) => p.holds === false).map((p) => [p.id, p.counterexample!.length]);
    expect(refuted(plain)).toContainEqual(["no-conflicting-proceeds", expect.any(Number)]);
    expect(refuted(reduced)).toEqual(refuted(plain));
    expect(refuted(full)).toEqual(refuted(plain));
    expect(deferredRoutes(rulebook).main).toBe(false);
  });

  it("Kestrel Bank is proved with deferral and without, in fewer states with it (4 axles, 2 trains)", () => {
    const rulebook = kestrelBankLayout().rulebook;
    const small = { ...rulebook, proving: { ...rulebook.proving!, maxAxles: 4, maxTrainsPerRoute: 2 } };
    const reduced = prove(small);
    const full = prove(small, { noDeferral: true });
    expect(reduced.verdict).toBe("proved");
    expect(full.verdict).toBe("proved");
    expect(reduced.stats.deferredGroups).toBe(3);
    expect(full.stats.deferredGroups).toBeUndefined();
    expect(reduced.stats.states).toBeLessThan(full.stats.states);
  });
});
