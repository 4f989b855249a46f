/**
 * Deferred stream axles, a reduction on top of lazy split (environment.ts `streamMoves`,
 * docs/prover.md "Deferred stream axles").
 *
 * While a group's stream already holds an axle, one more axle crossing its only approach
 * detector D usually changes nothing the engine or a property can tell: the approach counter
 * goes from "some" to "more", and every rule reads it only as "some". Such an axle then
 * commutes with every move until the group's front can next cross entry (its signal shows a
 * proceed and the train ahead has cleared entry: the group is *ready*). So the search takes it
 * only while the group is ready; at any other time it waits, which removes most of the states
 * in which one route's train moves while other routes' queues grow.
 *
 * Why nothing is lost (the argument the property tests check, written out in docs/prover.md):
 * - Every §5 run can be reordered, without changing its length or what any property reads along
 *   it, so that each such axle crosses D while its group is ready (it is moved later, past moves
 *   it commutes with, up to the next moment the group is ready — at the latest the split that
 *   needs it) or not at all (when none follows). So every violation of a safety property has a
 *   shortest run the reduced search explores, of the same length.
 * - Axles crossing D are arrivals, which `no-stuck-train` never uses; the reduced search keeps
 *   every other move, so each state it reaches is judged on exactly the moves of the full search.
 *   A state it does not reach is a reached one plus axles waiting in streams of groups that were
 *   not ready; following a reached state's way to a proceed, each such group becomes ready before
 *   its front crosses entry, where the reduced search takes those axles too.
 *
 * When it applies (checked here on the rulebook; a group that fails any check is not deferred):
 * - the group has one approach detector D and entry E (lazy split), and no other group's route
 *   passes D or E, and no route passes them again further on;
 * - every rule triggered by D has no condition and only adds a positive amount to counters;
 * - each such counter starts at 0, and is otherwise only changed by rules triggered by E that
 *   have no condition and together take off what D's rules add (so it is a fixed multiple k of
 *   the axles between D and E, and at least k while the stream holds an axle);
 * - every condition on such a counter reads the same for every value ≥ k;
 * - no quiet rule is triggered by D.
 */
import { matchAction, matchCondition, matchTrigger, unreachable } from "../kinds";
import type { Action, Comparison, Condition, Rule, Trigger } from "../schema";
import type { Model } from "./model";

/** Bit g set: group g's stream axles may be deferred (see the module notes). */
export function deferrableGroups(model: Model): number {
  let mask = 0;
  for (const group of model.groups) if (deferrable(model, group.index)) mask |= 1 << group.index;
  return mask;
}

function deferrable(model: Model, g: number): boolean {
  const group = model.groups[g];
  if (group.entryIndex !== 1) return false;
  const first = model.routes[group.routes[0]];
  const [d, e] = first.path;
  for (const route of model.routes) {
    const at = route.group === g ? 2 : 0;
    if (route.path.slice(at).some((x) => x === d || x === e)) return false;
  }
  const rules = model.rulebook.rules;
  const triggeredBy = (rule: Rule, detector: string): boolean => passedAt(rule.on) === detector;
  if (rules.some((r) => quietAt(r.on) === d)) return false;

  // What D's rules add, per counter.
  const added = new Map<string, number>();
  for (const rule of rules.filter((r) => triggeredBy(r, d))) {
    if (rule.if !== undefined) return false;
    for (const action of rule.do) {
      const add = addOf(action);
      if (add === undefined || add.by <= 0) return false;
      added.set(add.counter, (added.get(add.counter) ?? 0) + add.by);
    }
  }
  const counters = model.rulebook.counters ?? {};
  for (const [counter, k] of added) {
    if ((counters[counter] ?? 0) !== 0) return false;
    let takenAtEntry = 0;
    for (const rule of rules) {
      const touches = rule.do.filter((a) => counterOf(a) === counter);
      if (touches.length === 0 || triggeredBy(rule, d)) continue;
      if (!triggeredBy(rule, e) || rule.if !== undefined) return false;
      for (const a of touches) {
        const add = addOf(a);
        if (add === undefined) return false;
        takenAtEntry -= add.by;
      }
    }
    if (takenAtEntry !== k) return false;
    for (const rule of rules) if (rule.if !== undefined && !readsAsSome(rule.if, counter, k)) return false;
  }
  return true;
}

/** The detector a `pass` trigger names, else undefined. */
function passedAt(t: Trigger): string | undefined {
  return matchTrigger<string | undefined>(t, { standing: () => undefined, pass: (x) => x.pass, moved: () => undefined, quiet: () => undefined });
}

/** The detector a `quiet` trigger names, else undefined. */
function quietAt(t: Trigger): string | undefined {
  return matchTrigger<string | undefined>(t, { standing: () => undefined, pass: () => undefined, moved: () => undefined, quiet: (x) => x.quiet });
}

/** The counter an action changes, if it changes one. */
function counterOf(a: Action): string | undefined {
  const none = (): undefined => undefined;
  return matchAction<string | undefined>(a, {
    set: none,
    clear: none,
    add: (x) => x.add,
    zero: (x) => x.zero,
    select: none,
    show: none,
    throw: none,
    alarm: none,
  });
}

function addOf(a: Action): { counter: string; by: number } | undefined {
  return "add" in a ? { counter: a.add, by: a.by } : undefined;
}

/** Every comparison of `counter` in `c` has one truth value over all values ≥ k. */
function readsAsSome(c: Condition, counter: string, k: number): boolean {
  const yes = (): boolean => true;
  return matchCondition(c, {
    latch: yes,
    count: (x) => x.count !== counter || constantFrom(x.op, x.value, k),
    selector: yes,
    aspect: yes,
    points: yes,
    not: (x) => readsAsSome(x.not, counter, k),
    all: (x) => x.all.every((y) => readsAsSome(y, counter, k)),
    any: (x) => x.any.every((y) => readsAsSome(y, counter, k)),
  });
}

/** `value op v` reads the same for every value ≥ k. */
function constantFrom(op: Comparison, v: number, k: number): boolean {
  switch (op) {
    case "==":
    case "!=":
    case ">":
    case "<=":
      return v < k;
    case ">=":
    case "<":
      return v <= k;
    default:
      return unreachable(op);
  }
}
