/**
 * Random rulebooks for property tests of the prover (fast-check arbitraries): small two-route
 * converging junctions (rulebook /1, used against SPIN and against the plain search) and small
 * facing junctions with points (rulebook /2). Counters are kept finite by guarding every
 * increment with `counter < COUNT_CAP`, so every state space is finite.
 */
import fc from "fast-check";
import { rulebookSchema, type Action, type Condition, type Rule, type Rulebook } from "@shared/rulebook/schema";
import { convergingJunction } from "@shared/rulebook/templates";
import { kestrelRoutes } from "../fixtures/junctions";

export const COUNTERS = ["a", "b"] as const;
/** Counters stay small: every increment is guarded by `counter < COUNT_CAP`. */
export const COUNT_CAP = 2;

function conditionArb(extra: fc.Arbitrary<Condition>[], aspects: fc.Arbitrary<Condition>): fc.Arbitrary<Condition> {
  return fc.letrec<{ c: Condition }>((tie) => ({
    c: fc.oneof(
      { depthSize: "small", withCrossShrink: true },
      fc.constant<Condition>({ latch: "x" }),
      fc.record({ count: fc.constantFrom(...COUNTERS), op: fc.constantFrom("==", "!=", ">", "<="), value: fc.integer({ min: 0, max: 2 }) }) as fc.Arbitrary<Condition>,
      ...extra,
      aspects,
      fc.record({ not: tie("c") }),
      fc.record({ all: fc.array(tie("c"), { minLength: 1, maxLength: 2 }) }),
      fc.record({ any: fc.array(tie("c"), { minLength: 1, maxLength: 2 }) }),
    ),
  })).c;
}

const counterActions: fc.Arbitrary<Action>[] = [
  fc.constant<Action>({ set: "x" }),
  fc.constant<Action>({ clear: "x" }),
  fc.record({ add: fc.constantFrom(...COUNTERS), by: fc.constantFrom(1, -1, -2) }),
  fc.record({ zero: fc.constantFrom(...COUNTERS) }),
];

/** Guards every increment with `counter < COUNT_CAP` and names the rules r0, r1, … */
function capped(rules: { on: Rule["on"]; if?: Condition; do: Action[] }[]): Rule[] {
  return rules.map((r, i) => {
    const caps = r.do
      .filter((a): a is { add: string; by: number } => "add" in a && a.by > 0)
      .map((a): Condition => ({ count: a.add, op: "<", value: COUNT_CAP }));
    const conditions = [...(r.if ? [r.if] : []), ...caps];
    const ifPart = conditions.length === 0 ? undefined : conditions.length === 1 ? conditions[0] : { all: conditions };
    return { id: `r${i}`, on: r.on, ...(ifPart ? { if: ifPart } : {}), do: r.do };
  });
}

const CONVERGING_DETECTORS = ["MA", "ME", "JX", "BA", "BE"] as const;

/** Two routes, main (M1: MA, ME, JX) and branch (B1: BA, BE, JX), conflicting; random rules. */
export function convergingRulebookArb(limits: { maxAxles: number; maxTrains: number; priority?: boolean }): fc.Arbitrary<Rulebook> {
  const condition = conditionArb(
    [fc.record({ selector: fc.constant("route"), is: fc.constantFrom("none", "main", "branch") })],
    fc.record({ aspect: fc.constantFrom("M1", "B1"), is: fc.constantFrom("danger" as const, "clear" as const) }),
  );
  const action = fc.oneof(
    ...counterActions,
    fc.record({ select: fc.constant("route"), value: fc.constantFrom("none", "main", "branch") }),
    fc.record({ show: fc.constantFrom("M1", "B1"), aspect: fc.constantFrom("danger" as const, "clear" as const) }),
  );
  const trigger = fc.oneof(
    fc.constantFrom(...CONVERGING_DETECTORS).map((pass) => ({ pass })),
    fc.constantFrom("ME", "JX").map((quiet) => ({ quiet, ms: 2000 })),
    fc.constant("standing" as const),
  );
  const rule = fc.record({ on: trigger, if: fc.option(condition, { nil: undefined }), do: fc.array(action, { minLength: 1, maxLength: 3 }) });
  return fc
    .record({
      rules: fc.array(rule, { minLength: 2, maxLength: 6 }),
      maxAxles: fc.integer({ min: 1, max: limits.maxAxles }),
      maxTrainsPerRoute: fc.integer({ min: 1, max: limits.maxTrains }),
      priority: limits.priority ? fc.constantFrom(undefined, "main", "branch") : fc.constant(undefined),
    })
    .map(({ rules, maxAxles, maxTrainsPerRoute, priority }) => {
      const built = capped(rules);
      // Two sound-ish rules so trains get past their signals often enough to make things happen.
      built.push(
        { id: "open-main", on: { pass: "MA" }, do: [{ show: "M1", aspect: "clear" }] },
        { id: "open-branch", on: { pass: "BA" }, do: [{ show: "B1", aspect: "clear" }] },
      );
      return rulebookSchema.parse({
        format: "blocklight.rulebook/1",
        latches: { x: false },
        counters: { a: 0, b: 0 },
        selectors: { route: { values: ["none", "main", "branch"], initial: "none" } },
        initial: { M1: "danger", B1: "danger" },
        rules: built,
        proving: {
          routes: kestrelRoutes(),
          conflicts: [["main", "branch"]],
          ...(priority ? { priority } : {}),
          maxAxles,
          maxTrainsPerRoute,
        },
      });
    });
}

const FACING_DETECTORS = ["WA", "WE", "TX", "LX"] as const;

/**
 * A facing junction (rulebook /2): W1 at WA/WE leads to `through` (P1 normal, exit TX) and
 * `loop` (P1 reverse, exit LX); P1 is thrown by some rules (power-worked) or by none (hand).
 */
export function facingRulebookArb(limits: { maxAxles: number; maxTrains: number }): fc.Arbitrary<Rulebook> {
  const condition = conditionArb(
    [fc.record({ points: fc.constant("P1"), lies: fc.constantFrom("normal" as const, "reverse" as const, "moving" as const, "unknown" as const) })],
    fc.record({ aspect: fc.constant("W1"), is: fc.constantFrom("danger" as const, "clear" as const) }),
  );
  const action = fc.oneof(
    ...counterActions,
    fc.record({ show: fc.constant("W1"), aspect: fc.constantFrom("danger" as const, "clear" as const) }),
    fc.record({ throw: fc.constant("P1"), to: fc.constantFrom("normal" as const, "reverse" as const) }),
  );
  const trigger = fc.oneof(
    fc.constantFrom(...FACING_DETECTORS).map((pass) => ({ pass })),
    fc.constant({ moved: "P1" }),
    fc.constant({ quiet: "TX", ms: 2000 }),
    fc.constant("standing" as const),
  );
  const rule = fc.record({ on: trigger, if: fc.option(condition, { nil: undefined }), do: fc.array(action, { minLength: 1, maxLength: 3 }) });
  return fc
    .record({
      rules: fc.array(rule, { minLength: 2, maxLength: 6 }),
      hand: fc.boolean(),
      maxAxles: fc.integer({ min: 1, max: limits.maxAxles }),
      maxTrainsPerRoute: fc.integer({ min: 1, max: limits.maxTrains }),
    })
    .map(({ rules, hand, maxAxles, maxTrainsPerRoute }) => {
      const built = capped(rules).map((r) => (hand ? { ...r, do: r.do.filter((a) => !("throw" in a)) } : r));
      built.push({ id: "open", on: { pass: "WA" }, do: [{ show: "W1", aspect: "clear" }] });
      return rulebookSchema.parse({
        format: "blocklight.rulebook/2",
        latches: { x: false },
        counters: { a: 0, b: 0 },
        initial: { W1: "danger" },
        rules: built,
        proving: {
          routes: [
            { id: "through", signal: "W1", approach: ["WA"], entry: "WE", exit: ["TX"], points: { P1: "normal" } },
            { id: "loop", signal: "W1", approach: ["WA"], entry: "WE", exit: ["LX"], points: { P1: "reverse" } },
          ],
          conflicts: [],
          maxAxles,
          maxTrainsPerRoute,
        },
      });
    });
}

/**
 * The converging template (priority or first-come, two routes) with random rules added: the
 * template's approach counters are the kind whose stream axles the prover may defer
 * (shared/rulebook/proving/deferral.ts), and the added rules read them, sometimes in ways that
 * tell "one" from "more" and sometimes change them or react to the approach detector, which
 * must turn the deferral off for that route. The approach step is 1 or 2 a axle.
 */
export function countingRulebookArb(limits: { maxAxles: number; maxTrains: number }): fc.Arbitrary<Rulebook> {
  const approach = ["mainApproach", "branchApproach"] as const;
  const condition = conditionArb(
    [
      fc.record({ selector: fc.constant("route"), is: fc.constantFrom("none", "main", "branch") }),
      fc.record({ count: fc.constantFrom(...approach, "junction"), op: fc.constantFrom("==", "!=", ">", "<=", ">=", "<"), value: fc.integer({ min: 0, max: 3 }) }) as fc.Arbitrary<Condition>,
    ],
    fc.record({ aspect: fc.constantFrom("M1", "B1"), is: fc.constantFrom("danger" as const, "clear" as const) }),
  );
  const action = fc.oneof(
    { arbitrary: fc.oneof(...counterActions), weight: 3 },
    { arbitrary: fc.record({ select: fc.constant("route"), value: fc.constantFrom("none", "main", "branch") }), weight: 2 },
    { arbitrary: fc.record({ show: fc.constantFrom("M1", "B1"), aspect: fc.constantFrom("danger" as const, "clear" as const) }), weight: 2 },
    { arbitrary: fc.record({ add: fc.constantFrom(...approach), by: fc.constantFrom(1, -1) }), weight: 1 },
  );
  const trigger = fc.oneof(
    { arbitrary: fc.constant("standing" as const), weight: 4 },
    { arbitrary: fc.constantFrom("ME", "BE", "JX").map((pass) => ({ pass })), weight: 3 },
    { arbitrary: fc.constantFrom("MA", "BA").map((pass) => ({ pass })), weight: 1 },
    { arbitrary: fc.constantFrom("ME", "JX", "MA").map((quiet) => ({ quiet, ms: 2000 })), weight: 1 },
  );
  const rule = fc.record({ on: trigger, if: fc.option(condition, { nil: undefined }), do: fc.array(action, { minLength: 1, maxLength: 2 }) });
  return fc
    .record({
      extra: fc.array(rule, { minLength: 0, maxLength: 3 }),
      step: fc.constantFrom(1, 2),
      order: fc.constantFrom("priority" as const, "first-come" as const),
      maxAxles: fc.integer({ min: 1, max: limits.maxAxles }),
      maxTrainsPerRoute: fc.integer({ min: 1, max: limits.maxTrains }),
    })
    .map(({ extra, step, order, maxAxles, maxTrainsPerRoute }) => {
      const base = convergingJunction({ routes: kestrelRoutes(), order, priority: "main", maxAxles, maxTrainsPerRoute });
      const stepped = base.rules.map((r) => ({
        ...r,
        do: r.do.map((a) => ("add" in a && (approach as readonly string[]).includes(a.add) ? { add: a.add, by: a.by * step } : a)),
      }));
      return rulebookSchema.parse({
        ...base,
        latches: { ...base.latches, x: false },
        counters: { ...base.counters, a: 0, b: 0 },
        rules: [...stepped, ...capped(extra).map((r) => ({ ...r, id: `extra-${r.id}` }))],
      });
    });
}
