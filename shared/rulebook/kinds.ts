/**
 * The node kinds of a rulebook — conditions, actions and triggers — and one way to walk them.
 *
 * Every place that must handle each kind (engine, validation, sentences, mentions, Promela,
 * diff, the form editor's tables) goes through `matchCondition` / `matchAction` /
 * `matchTrigger` with a handler for every kind, or through a `Record<Kind, …>` table. A new
 * kind added to the schema is then a compile error in each of those places until it is
 * handled: the handler objects are exhaustive mapped types, and the kind functions end in
 * `unreachable(x: never)`.
 *
 * @example
 * const words = matchAction(action, {
 *   set: (a) => `set ${a.set}`, clear: (a) => `clear ${a.clear}`, …
 * });
 */
import type { Action, Condition, Trigger } from "./schema";

/** Marks code that the type checker has proved cannot run; reaching it at run time is a bug. */
export function unreachable(x: never): never {
  throw new Error(`unhandled rulebook node: ${JSON.stringify(x)}`);
}

export const CONDITION_KINDS = ["latch", "count", "selector", "aspect", "points", "not", "all", "any"] as const;
export type ConditionKind = (typeof CONDITION_KINDS)[number];
/** The condition of one kind, e.g. `ConditionOf<"count">` is `{ count, op, value }`. */
export type ConditionOf<K extends ConditionKind> = Extract<Condition, Record<K, unknown>>;

export const ACTION_KINDS = ["set", "clear", "add", "zero", "select", "show", "throw", "alarm"] as const;
export type ActionKind = (typeof ACTION_KINDS)[number];
export type ActionOf<K extends ActionKind> = Extract<Action, Record<K, unknown>>;

export const TRIGGER_KINDS = ["standing", "pass", "moved", "quiet"] as const;
export type TriggerKind = (typeof TRIGGER_KINDS)[number];
export type TriggerOf<K extends TriggerKind> = K extends "standing" ? "standing" : Extract<Trigger, Record<K, unknown>>;

/** The kind of a condition (which field names it). */
export function conditionKind(c: Condition): ConditionKind {
  if ("latch" in c) return "latch";
  if ("count" in c) return "count";
  if ("selector" in c) return "selector";
  if ("aspect" in c) return "aspect";
  if ("points" in c) return "points";
  if ("not" in c) return "not";
  if ("all" in c) return "all";
  if ("any" in c) return "any";
  return unreachable(c);
}

/** The kind of an action. */
export function actionKind(a: Action): ActionKind {
  if ("set" in a) return "set";
  if ("clear" in a) return "clear";
  if ("add" in a) return "add";
  if ("zero" in a) return "zero";
  if ("select" in a) return "select";
  if ("show" in a) return "show";
  if ("throw" in a) return "throw";
  if ("alarm" in a) return "alarm";
  return unreachable(a);
}

/** The kind of a trigger. */
export function triggerKind(t: Trigger): TriggerKind {
  if (t === "standing") return "standing";
  if ("pass" in t) return "pass";
  if ("moved" in t) return "moved";
  if ("quiet" in t) return "quiet";
  return unreachable(t);
}

export type ConditionCases<R> = { [K in ConditionKind]: (c: ConditionOf<K>) => R };
export type ActionCases<R> = { [K in ActionKind]: (a: ActionOf<K>) => R };
export type TriggerCases<R> = { [K in TriggerKind]: (t: TriggerOf<K>) => R };

/** Calls the handler for the condition's kind. Every kind must have a handler. */
export function matchCondition<R>(c: Condition, cases: ConditionCases<R>): R {
  return (cases[conditionKind(c)] as (c: Condition) => R)(c);
}

/** Calls the handler for the action's kind. Every kind must have a handler. */
export function matchAction<R>(a: Action, cases: ActionCases<R>): R {
  return (cases[actionKind(a)] as (a: Action) => R)(a);
}

/** Calls the handler for the trigger's kind. Every kind must have a handler. */
export function matchTrigger<R>(t: Trigger, cases: TriggerCases<R>): R {
  return (cases[triggerKind(t)] as (t: Trigger) => R)(t);
}

/** The conditions directly inside a condition (none for a leaf). */
export function childConditions(c: Condition): readonly Condition[] {
  return matchCondition<readonly Condition[]>(c, {
    latch: () => [],
    count: () => [],
    selector: () => [],
    aspect: () => [],
    points: () => [],
    not: (n) => [n.not],
    all: (n) => n.all,
    any: (n) => n.any,
  });
}

/** Every condition of a tree, the root first (depth first). */
export function* conditionsIn(c: Condition | undefined): Generator<Condition> {
  if (c === undefined) return;
  yield c;
  for (const child of childConditions(c)) yield* conditionsIn(child);
}
