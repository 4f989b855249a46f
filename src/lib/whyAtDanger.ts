/**
 * "Why is this signal at danger?" for the live control room (pure): the fault or hold that
 * overrides the rules, else each rule that could take the signal off danger, with the parts
 * of its condition that fail in the live state (counter, latch, selector, aspect) and the
 * signaller command that would change the failing part, where one exists. A stray pulse that
 * leaves `junction = 1` reads: "give-main needs junction == 0, but junction is 1 → zero junction".
 */
import type { Condition, Rule, Rulebook } from "@shared/rulebook/schema";

export interface LiveFacts {
  latches: Record<string, boolean>;
  counters: Record<string, number>;
  selectors: Record<string, string>;
  /** What the rules ask for on each signal (the live page's `shown` outside holds and faults). */
  shown: Record<string, string>;
  held: string[];
  faulted: null | { reason: string };
  /** Where each points lie as last reported, when the live state carries it. */
  points?: Record<string, string>;
}

/** One failing part of a condition, and the command that would make it hold (if any). */
export interface Blocker {
  text: string;
  command?: { type: "zero"; counter: string } | { type: "set" | "clear"; latch: string } | { type: "release"; signal: string } | { type: "restart" };
}

export interface Explanation {
  summary: string;
  /** Rules that would show the signal off danger, each with what stops it now. */
  rules: { id: string; trigger: string; blockers: Blocker[] }[];
  blockers: Blocker[];
}

const compare = (a: number, op: string, b: number) =>
  op === "==" ? a === b : op === "!=" ? a !== b : op === ">" ? a > b : op === ">=" ? a >= b : op === "<" ? a < b : a <= b;

/** The failing parts of `c` in `facts` (empty when it holds). `negated` flips the sense under a `not`. */
function blockersOf(c: Condition, facts: LiveFacts, negated = false): Blocker[] {
  if ("all" in c) {
    const parts = c.all.map((x) => blockersOf(x, facts, negated));
    // all holds when every part holds; under not, it fails only if every part holds (then any part would do).
    return negated ? (parts.every((p) => p.length === 0) ? [{ text: `not all of: ${c.all.length} conditions hold` }] : []) : parts.flat();
  }
  if ("any" in c) {
    const parts = c.any.map((x) => blockersOf(x, facts, negated));
    if (negated) return parts.flat();
    return parts.some((p) => p.length === 0) ? [] : (parts.sort((a, b) => a.length - b.length)[0] ?? []);
  }
  if ("not" in c) return blockersOf(c.not, facts, !negated);
  if ("latch" in c) {
    const on = facts.latches[c.latch] ?? false;
    if (on !== negated) return [];
    return [{ text: `needs latch ${c.latch} ${negated ? "clear" : "set"}, but it is ${on ? "set" : "clear"}`, command: { type: negated ? "clear" : "set", latch: c.latch } }];
  }
  if ("count" in c) {
    const n = facts.counters[c.count] ?? 0;
    if (compare(n, c.op, c.value) !== negated) return [];
    const wantsZero = !negated && ((c.op === "==" && c.value === 0) || (c.op === "<" && c.value === 1) || (c.op === "<=" && c.value === 0));
    return [{ text: `needs ${negated ? "not " : ""}${c.count} ${c.op} ${c.value}, but ${c.count} is ${n}`, command: wantsZero && n > 0 ? { type: "zero", counter: c.count } : undefined }];
  }
  if ("selector" in c) {
    const v = facts.selectors[c.selector];
    if ((v === c.is) !== negated) return [];
    return [{ text: `needs selector ${c.selector} ${negated ? "not " : ""}${c.is}, but it is ${v ?? "unset"}` }];
  }
  if ("points" in c) {
    const lies = facts.points?.[c.points] ?? "unknown";
    if ((lies === c.lies) !== negated) return [];
    return [{ text: `needs points ${c.points} ${negated ? "not " : ""}lying ${c.lies}, but they lie ${lies}` }];
  }
  const a = facts.shown[c.aspect] ?? "danger";
  if ((a === c.is) !== negated) return [];
  return [{ text: `needs ${c.aspect} ${negated ? "not " : ""}at ${c.is}, but it is at ${a}` }];
}

function triggerWords(rule: Rule): string {
  if (rule.on === "standing") return "as soon as its condition holds";
  if ("pass" in rule.on) return `on the next pulse at ${rule.on.pass}`;
  if ("quiet" in rule.on) return `when ${rule.on.quiet} has been quiet ${rule.on.ms / 1000} s`;
  if ("moved" in rule.on) return `when points ${rule.on.moved} are reported moved`;
  return "on its trigger";
}

export function whyAtDanger(rulebook: Rulebook, facts: LiveFacts, signal: string): Explanation {
  if (facts.faulted) {
    const blocker: Blocker = { text: `the rulebook is faulted (${facts.faulted.reason}): every signal shows danger`, command: { type: "restart" } };
    return { summary: "Danger because the rulebook is faulted; only a restart clears it.", rules: [], blockers: [blocker] };
  }
  if (facts.held.includes(signal)) {
    const blocker: Blocker = { text: `a signaller holds ${signal} at danger`, command: { type: "release", signal } };
    return { summary: `Danger because a signaller holds ${signal}.`, rules: [], blockers: [blocker] };
  }
  const offRules = rulebook.rules.filter((r) => r.do.some((a) => "show" in a && a.show === signal && a.aspect !== "danger"));
  const rules = offRules.map((r) => ({ id: r.id, trigger: triggerWords(r), blockers: r.if ? blockersOf(r.if, facts) : [] }));
  const blockers = rules.flatMap((r) => r.blockers);
  if (offRules.length === 0) return { summary: `No rule ever shows ${signal} off danger.`, rules, blockers };
  const ready = rules.filter((r) => r.blockers.length === 0);
  const summary = ready.length
    ? `Rule ${ready.map((r) => r.id).join(", ")} would clear it ${ready[0].trigger}.`
    : `Danger: ${rules.map((r) => `${r.id} ${r.blockers.map((b) => b.text).join("; ")}`).join(" — ")}.`;
  return { summary, rules, blockers };
}
