/**
 * Pure, immutable edits of a rulebook draft for the form editor: the condition tree, lists
 * of rules and actions, and declarations. Nothing here validates; the whole draft is checked
 * with `validateRulebookFile` after every edit, so these only keep the shape sound.
 *
 * A place in a condition tree is named by the same segments as its JSON path below the
 * rule's `if`, e.g. `["all", 1, "not"]` for `$.rules[3].if.all[1].not`, so an error's path
 * and a form control meet without translation.
 */
import { ACTION_KINDS, type ActionKind, type ConditionKind } from "@shared/rulebook/kinds";
import type { Action, Aspect, Condition, Rule, Rulebook } from "@shared/rulebook/schema";

export { ACTION_KINDS, type ActionKind };

export type ConditionPath = readonly (string | number)[];

/** The kinds of leaf condition the form offers (every condition kind that is not a group or a not). */
export type LeafKind = Exclude<ConditionKind, "not" | "all" | "any">;
export type GroupKind = "all" | "any";

/** The condition at `path`, or undefined when there is none. */
export function conditionAt(root: Condition | undefined, path: ConditionPath): Condition | undefined {
  let node: unknown = root;
  for (const segment of path) {
    if (node === null || typeof node !== "object") return undefined;
    node = (node as Record<string | number, unknown>)[segment];
  }
  return node as Condition | undefined;
}

/** A copy of `root` with the condition at `path` replaced by `next`. */
export function replaceCondition(root: Condition | undefined, path: ConditionPath, next: Condition): Condition {
  if (path.length === 0) return next;
  const [head, ...rest] = path;
  const container = root as unknown as Record<string | number, unknown> | unknown[];
  if (Array.isArray(container)) {
    const copy = [...container];
    copy[head as number] = replaceCondition(copy[head as number] as Condition, rest, next);
    return copy as unknown as Condition;
  }
  const child = (container as Record<string | number, unknown>)[head] as Condition | undefined;
  return { ...(container as object), [head]: replaceCondition(child, rest, next) } as Condition;
}

/**
 * A copy of `root` without the condition at `path`. Removing the only thing inside a `not`
 * removes the `not` as well, since a `not` of nothing means nothing; removing the root leaves
 * the rule with no condition (always true).
 */
export function removeCondition(root: Condition | undefined, path: ConditionPath): Condition | undefined {
  if (path.length === 0) return undefined;
  const last = path[path.length - 1];
  const parentPath = path.slice(0, -1);
  if (typeof last === "number") {
    const list = conditionAt(root, parentPath) as unknown as Condition[];
    return replaceCondition(root, parentPath, list.filter((_, index) => index !== last) as unknown as Condition);
  }
  return removeCondition(root, parentPath);
}

/**
 * Adds `child` at the group at `path`. With no condition yet the child becomes the
 * condition; a leaf or a `not` at `path` is turned into "all of [it, child]".
 */
export function addCondition(root: Condition | undefined, path: ConditionPath, child: Condition): Condition {
  const target = conditionAt(root, path);
  if (target === undefined) return replaceCondition(root, path, child);
  if ("all" in target) return replaceCondition(root, path, { all: [...target.all, child] });
  if ("any" in target) return replaceCondition(root, path, { any: [...target.any, child] });
  return replaceCondition(root, path, { all: [target, child] });
}

/** Puts the condition at `path` inside a `not`, or as the only member of a new group. */
export function wrapCondition(root: Condition | undefined, path: ConditionPath, kind: "not" | GroupKind): Condition | undefined {
  const target = conditionAt(root, path);
  if (target === undefined) return root;
  const wrapped: Condition = kind === "not" ? { not: target } : kind === "all" ? { all: [target] } : { any: [target] };
  return replaceCondition(root, path, wrapped);
}

/** Replaces the `not` at `path` by what it contains. */
export function unwrapNot(root: Condition | undefined, path: ConditionPath): Condition | undefined {
  const target = conditionAt(root, path);
  if (target === undefined || !("not" in target)) return root;
  return replaceCondition(root, path, target.not);
}

/** Turns an all-group into an any-group or back, keeping its members. */
export function setGroupKind(root: Condition | undefined, path: ConditionPath, kind: GroupKind): Condition | undefined {
  const target = conditionAt(root, path);
  if (target === undefined) return root;
  const members = "all" in target ? target.all : "any" in target ? target.any : null;
  if (members === null) return root;
  return replaceCondition(root, path, kind === "all" ? { all: members } : { any: members });
}

/** Names a form can fill new conditions and actions with. */
export interface Declared {
  latches: string[];
  counters: string[];
  selectors: { name: string; values: string[] }[];
  signals: { id: string; aspects: Aspect[] }[];
  detectors: string[];
  /** The layout's points; only power-worked ones can be thrown. */
  points: { id: string; worked: "power" | "hand" }[];
}

/** A new leaf condition of `kind`, filled with the first declared names. */
export function defaultLeaf(kind: LeafKind, declared: Declared): Condition {
  switch (kind) {
    case "latch":
      return { latch: declared.latches[0] ?? "" };
    case "count":
      return { count: declared.counters[0] ?? "", op: ">", value: 0 };
    case "selector": {
      const selector = declared.selectors[0];
      return { selector: selector?.name ?? "", is: selector?.values[0] ?? "" };
    }
    case "aspect":
      return { aspect: declared.signals[0]?.id ?? "", is: "danger" };
    case "points":
      return { points: declared.points[0]?.id ?? "", lies: "normal" };
  }
}


/** The kind of an action, or null for a shape the form does not know. */
export function actionKind(action: unknown): ActionKind | null {
  if (action === null || typeof action !== "object") return null;
  return ACTION_KINDS.find((kind) => kind in action) ?? null;
}

/** A new action of `kind`, filled with the first declared names. */
export function defaultAction(kind: ActionKind, declared: Declared): Action {
  switch (kind) {
    case "set":
      return { set: declared.latches[0] ?? "" };
    case "clear":
      return { clear: declared.latches[0] ?? "" };
    case "add":
      return { add: declared.counters[0] ?? "", by: 1 };
    case "zero":
      return { zero: declared.counters[0] ?? "" };
    case "select": {
      const selector = declared.selectors[0];
      return { select: selector?.name ?? "", value: selector?.values[0] ?? "" };
    }
    case "show": {
      const signal = declared.signals[0];
      return { show: signal?.id ?? "", aspect: signal?.aspects[0] ?? "danger" };
    }
    case "throw":
      return { throw: declared.points.find((p) => p.worked === "power")?.id ?? "", to: "normal" };
    case "alarm":
      return { alarm: "Check the junction" };
  }
}

/** A copy of `list` with the item at `from` moved to `to` (clamped to the list). */
export function moveItem<T>(list: readonly T[], from: number, to: number): T[] {
  const target = Math.max(0, Math.min(list.length - 1, to));
  if (from === target || from < 0 || from >= list.length) return [...list];
  const copy = [...list];
  const [item] = copy.splice(from, 1);
  copy.splice(target, 0, item);
  return copy;
}

export function removeItem<T>(list: readonly T[], index: number): T[] {
  return list.filter((_, i) => i !== index);
}

export function replaceItem<T>(list: readonly T[], index: number, item: T): T[] {
  return list.map((existing, i) => (i === index ? item : existing));
}

/** `base`, or `base-2`, `base-3`… whichever is not taken yet. */
export function uniqueName(base: string, taken: Iterable<string>): string {
  const used = new Set(taken);
  if (!used.has(base)) return base;
  for (let n = 2; ; n++) if (!used.has(`${base}-${n}`)) return `${base}-${n}`;
}

/** A copy of the rule at `index` placed just after it, with an id of its own. */
export function duplicateRule(rules: readonly Rule[], index: number): Rule[] {
  const original = rules[index];
  const copy: Rule = { ...structuredClone(original), id: uniqueName(`${original.id}-copy`, rules.map((r) => r.id)) };
  return [...rules.slice(0, index + 1), copy, ...rules.slice(index + 1)];
}

/** A copy of `record` with key `from` renamed to `to`, keeping the order of keys. */
export function renameKey<V>(record: Record<string, V>, from: string, to: string): Record<string, V> {
  return Object.fromEntries(Object.entries(record).map(([key, value]) => [key === from ? to : key, value]));
}

export function withoutKey<V>(record: Record<string, V>, key: string): Record<string, V> {
  return Object.fromEntries(Object.entries(record).filter(([existing]) => existing !== key));
}

/**
 * The draft as the form edits it: a parsed JSON value that looks enough like a rulebook
 * (an object with a list of rule objects), with absent declarations filled in. Anything
 * stranger is left to the JSON tab. Fields the form does not know are kept as they are.
 */
export function asFormRulebook(raw: unknown): Rulebook | null {
  if (raw === null || typeof raw !== "object" || Array.isArray(raw)) return null;
  const file = raw as Record<string, unknown>;
  if (!Array.isArray(file.rules) || !file.rules.every((rule) => rule !== null && typeof rule === "object" && !Array.isArray(rule))) {
    return null;
  }
  const record = (value: unknown) => (value !== null && typeof value === "object" && !Array.isArray(value) ? value : {});
  return {
    ...file,
    latches: record(file.latches),
    counters: record(file.counters),
    selectors: record(file.selectors),
    initial: record(file.initial),
  } as Rulebook;
}

/**
 * A copy of `object` with `key` set to `value` (or taken out when undefined). A new key is
 * placed just before `beforeKey`, so the JSON view keeps the usual order (id, note, on, if, do).
 */
export function withField<T extends object, K extends keyof T>(object: T, key: K, value: T[K] | undefined, beforeKey: keyof T): T {
  if (value === undefined) {
    const copy = { ...object };
    delete copy[key];
    return copy;
  }
  if (key in object || !(beforeKey in object)) return { ...object, [key]: value };
  const entries = Object.entries(object).flatMap(([k, v]) => (k === beforeKey ? [[key, value], [k, v]] : [[k, v]]));
  return Object.fromEntries(entries) as T;
}
