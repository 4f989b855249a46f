/**
 * What changed between two rulebook versions, in a structured form the rulebook page can
 * show as a readable list and a test can assert on.
 *
 * Rules are matched by id. Order is part of the meaning (standing rules settle in rule order,
 * the actions of rules fired by one pulse run in rule order, quiet ties break in rule order),
 * so a rule that keeps its words but changes place is reported as moved.
 *
 * @example
 * const before = kestrelBankLayout().rulebook;
 * const after = { ...before, counters: { ...before.counters, junction: 1 } };
 * diffRulebooks(before, after).counters;
 * // [{ change: "changed", name: "junction", before: 0, after: 1 }]
 */
import { describeAction, describeCondition, describeRule } from "./describe";
import type { Aspect, Condition, Proving, ProvingRoute, Rule, Rulebook, Trigger } from "./schema";

/** One named entry present on one side, the other, or both with different values. */
export type Change<T> =
  | { change: "added"; name: string; after: T }
  | { change: "removed"; name: string; before: T }
  | { change: "changed"; name: string; before: T; after: T };

export interface SelectorDeclaration {
  values: string[];
  initial: string;
}

/** The parts of a rule a reader thinks of separately. */
export type RulePart = "trigger" | "condition" | "actions" | "note";

/**
 * One changed part of a rule, old and new. Conditions and actions come as plain sentences
 * (`describeCondition`, `describeAction`); `null` means the rule has no condition or note.
 */
export type RulePartChange =
  | { part: "trigger"; before: Trigger; after: Trigger }
  | { part: "condition"; before: string | null; after: string | null }
  | { part: "actions"; before: string[]; after: string[] }
  | { part: "note"; before: string | null; after: string | null };

/** Rules added, removed or reworded. Positions are 1-based, as the readable rule list numbers them. */
export type RuleChange =
  | { change: "added"; id: string; position: number; rule: Rule; sentence: string }
  | { change: "removed"; id: string; position: number; rule: Rule; sentence: string }
  | {
      change: "changed";
      id: string;
      position: number;
      /** Which parts changed, in the order trigger, condition, actions, note. */
      parts: RulePartChange[];
      /** The whole rule as one sentence (`describeRule`) before and after. */
      before: string;
      after: string;
    };

/**
 * A rule kept in both versions whose place among the kept rules changed. Only the rules that
 * have to move to turn the old order into the new one are listed (the fewest such rules).
 */
export interface RuleMove {
  id: string;
  /** 1-based positions in the old and new rule lists. */
  from: number;
  to: number;
  /** Standing rules settle in rule order, so a move can change which one wins. */
  standing: boolean;
}

export type ProvingSetting = "priority" | "maxAxles" | "maxTrainsPerRoute";

export type ProvingChange =
  | { what: "block"; change: "added" | "removed" }
  | ({ what: "route" } & Change<ProvingRoute>)
  | { what: "conflict"; change: "added" | "removed"; routes: [string, string] }
  | ({ what: "setting" } & Change<string | number> & { name: ProvingSetting });

export interface RulebookDiff {
  latches: Change<boolean>[];
  counters: Change<number>[];
  selectors: Change<SelectorDeclaration>[];
  /** Initial aspects, by signal id. */
  initial: Change<Aspect>[];
  rules: RuleChange[];
  moved: RuleMove[];
  proving: ProvingChange[];
}

/** JSON with object keys sorted, so values equal in meaning compare equal whatever their key order. */
function canonical(value: unknown): string {
  if (Array.isArray(value)) return `[${value.map(canonical).join(",")}]`;
  if (value !== null && typeof value === "object") {
    const entries = Object.entries(value as Record<string, unknown>)
      .filter(([, v]) => v !== undefined)
      .sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
    return `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${canonical(v)}`).join(",")}}`;
  }
  return JSON.stringify(value) ?? "null";
}

function same(a: unknown, b: unknown): boolean {
  return canonical(a) === canonical(b);
}

/** Entries of two records compared by name: removed and changed in old order, then added in new order. */
function diffRecords<T>(before: Record<string, T>, after: Record<string, T>): Change<T>[] {
  const changes: Change<T>[] = [];
  for (const [name, old] of Object.entries(before)) {
    if (!Object.hasOwn(after, name)) changes.push({ change: "removed", name, before: old });
    else if (!same(old, after[name])) changes.push({ change: "changed", name, before: old, after: after[name] });
  }
  for (const [name, now] of Object.entries(after)) {
    if (!Object.hasOwn(before, name)) changes.push({ change: "added", name, after: now });
  }
  return changes;
}

function conditionText(condition: Condition | undefined): string | null {
  return condition ? describeCondition(condition) : null;
}

function ruleParts(before: Rule, after: Rule): RulePartChange[] {
  const parts: RulePartChange[] = [];
  if (!same(before.on, after.on)) parts.push({ part: "trigger", before: before.on, after: after.on });
  if (!same(before.if, after.if)) {
    parts.push({ part: "condition", before: conditionText(before.if), after: conditionText(after.if) });
  }
  if (!same(before.do, after.do)) {
    parts.push({ part: "actions", before: before.do.map(describeAction), after: after.do.map(describeAction) });
  }
  if ((before.note ?? null) !== (after.note ?? null)) {
    parts.push({ part: "note", before: before.note ?? null, after: after.note ?? null });
  }
  return parts;
}

/** Indexes (into `ids`) of one longest run of ids that keeps the order of `target`. */
function longestCommonOrder(ids: string[], target: string[]): Set<number> {
  const n = ids.length;
  const m = target.length;
  const table: number[][] = Array.from({ length: n + 1 }, () => new Array<number>(m + 1).fill(0));
  for (let i = n - 1; i >= 0; i--) {
    for (let j = m - 1; j >= 0; j--) {
      table[i][j] = ids[i] === target[j] ? table[i + 1][j + 1] + 1 : Math.max(table[i + 1][j], table[i][j + 1]);
    }
  }
  const kept = new Set<number>();
  let i = 0;
  let j = 0;
  while (i < n && j < m) {
    if (ids[i] === target[j]) {
      kept.add(i);
      i++;
      j++;
    } else if (table[i + 1][j] >= table[i][j + 1]) {
      i++;
    } else {
      j++;
    }
  }
  return kept;
}

function diffRules(before: Rule[], after: Rule[]): { rules: RuleChange[]; moved: RuleMove[] } {
  const oldIndex = new Map(before.map((rule, index) => [rule.id, index]));
  const newIndex = new Map(after.map((rule, index) => [rule.id, index]));
  const rules: RuleChange[] = [];

  before.forEach((rule, index) => {
    if (!newIndex.has(rule.id)) {
      rules.push({ change: "removed", id: rule.id, position: index + 1, rule, sentence: describeRule(rule) });
    }
  });
  after.forEach((rule, index) => {
    const oldAt = oldIndex.get(rule.id);
    if (oldAt === undefined) {
      rules.push({ change: "added", id: rule.id, position: index + 1, rule, sentence: describeRule(rule) });
      return;
    }
    const parts = ruleParts(before[oldAt], rule);
    if (parts.length > 0) {
      rules.push({
        change: "changed",
        id: rule.id,
        position: index + 1,
        parts,
        before: describeRule(before[oldAt]),
        after: describeRule(rule),
      });
    }
  });

  // Compare the order of the kept rules only: adding or removing a rule shifts numbers but moves nothing.
  const keptOld = before.filter((rule) => newIndex.has(rule.id)).map((rule) => rule.id);
  const keptNew = after.filter((rule) => oldIndex.has(rule.id)).map((rule) => rule.id);
  const inPlace = longestCommonOrder(keptNew, keptOld);
  const moved: RuleMove[] = keptNew
    .filter((_, index) => !inPlace.has(index))
    .map((id) => {
      const to = newIndex.get(id) ?? 0;
      return { id, from: (oldIndex.get(id) ?? 0) + 1, to: to + 1, standing: after[to].on === "standing" };
    });
  return { rules, moved };
}

const conflictKey = ([a, b]: [string, string]) => (a < b ? `${a}\u0000${b}` : `${b}\u0000${a}`);

function diffProving(before: Proving | undefined, after: Proving | undefined): ProvingChange[] {
  if (!before && !after) return [];
  const changes: ProvingChange[] = [];
  if (!before) changes.push({ what: "block", change: "added" });
  if (!after) changes.push({ what: "block", change: "removed" });

  const routes = (proving: Proving | undefined) => Object.fromEntries((proving?.routes ?? []).map((r) => [r.id, r]));
  for (const change of diffRecords(routes(before), routes(after))) changes.push({ what: "route", ...change });

  const conflicts = (proving: Proving | undefined) =>
    new Map((proving?.conflicts ?? []).map((pair) => [conflictKey(pair), pair] as const));
  const oldConflicts = conflicts(before);
  const newConflicts = conflicts(after);
  for (const [key, routes] of oldConflicts) {
    if (!newConflicts.has(key)) changes.push({ what: "conflict", change: "removed", routes });
  }
  for (const [key, routes] of newConflicts) {
    if (!oldConflicts.has(key)) changes.push({ what: "conflict", change: "added", routes });
  }

  const settings = (proving: Proving | undefined): Record<string, string | number> => {
    const out: Record<string, string | number> = {};
    if (proving?.priority !== undefined) out.priority = proving.priority;
    if (proving) {
      out.maxAxles = proving.maxAxles;
      out.maxTrainsPerRoute = proving.maxTrainsPerRoute;
    }
    return out;
  };
  for (const change of diffRecords(settings(before), settings(after))) {
    changes.push({ what: "setting", ...change, name: change.name as ProvingSetting });
  }
  return changes;
}

/**
 * Everything that differs from `before` to `after`: declarations (latches, counters,
 * selectors, initial aspects), rules added/removed/changed (matched by id), rules moved,
 * and the proving block. Pure; both arguments are left untouched.
 *
 * @example
 * const base = kestrelBankLayout().rulebook;
 * const swapped = { ...base, rules: [...base.rules.slice(0, 9), base.rules[10], base.rules[9]] };
 * diffRulebooks(base, swapped).moved;
 * // [{ id: "give-branch", from: 11, to: 10, standing: true }]
 */
export function diffRulebooks(before: Rulebook, after: Rulebook): RulebookDiff {
  const selectors = (rulebook: Rulebook): Record<string, SelectorDeclaration> =>
    Object.fromEntries(
      Object.entries(rulebook.selectors).map(([name, s]) => [name, { values: [...s.values], initial: s.initial }]),
    );
  return {
    latches: diffRecords(before.latches, after.latches),
    counters: diffRecords(before.counters, after.counters),
    selectors: diffRecords(selectors(before), selectors(after)),
    initial: diffRecords(before.initial, after.initial),
    ...diffRules(before.rules, after.rules),
    proving: diffProving(before.proving, after.proving),
  };
}

/** How many entries the diff lists, for a one-line summary. */
export function countChanges(diff: RulebookDiff): number {
  return (
    diff.latches.length +
    diff.counters.length +
    diff.selectors.length +
    diff.initial.length +
    diff.rules.length +
    diff.moved.length +
    diff.proving.length
  );
}

/** True when the two rulebooks mean the same: nothing to list. */
export function isEmptyDiff(diff: RulebookDiff): boolean {
  return countChanges(diff) === 0;
}
