/**
 * Rules in plain English, for the readable rulebook view and the printed clubroom copy.
 *
 * @example
 * describeRule({ id: "main-approach", on: { pass: "MA" }, do: [{ add: "mainApproach", by: 1 }] });
 * // "When a wheelset passes MA: add 1 to mainApproach."
 */
import { matchAction, matchCondition, matchTrigger } from "./kinds";
import type { Action, Comparison, Condition, PointsLie, Rule, Trigger } from "./schema";

const COMPARISON_WORDS: Record<Comparison, string> = {
  "==": "is",
  "!=": "is not",
  ">": "is more than",
  ">=": "is at least",
  "<": "is less than",
  "<=": "is at most",
};

function joinWords(parts: string[], conjunction: "and" | "or"): string {
  return parts.join(` ${conjunction} `);
}

/** Wraps a compound part in brackets so "a and (b or c)" reads unambiguously. */
function nested(condition: Condition): string {
  const text = describeCondition(condition);
  return ("all" in condition && condition.all.length > 1) || ("any" in condition && condition.any.length > 1)
    ? `(${text})`
    : text;
}

/** A condition as words, e.g. `junction is 0`, `shuntLock is set`, `M1 is showing clear`. */
export function describeCondition(condition: Condition): string {
  return matchCondition(condition, {
    latch: (c) => `${c.latch} is set`,
    count: (c) => `${c.count} ${COMPARISON_WORDS[c.op]} ${c.value}`,
    selector: (c) => `${c.selector} is ${c.is}`,
    aspect: (c) => `${c.aspect} is asked to show ${c.is}`,
    points: (c) => (c.lies === "unknown" ? `where ${c.points} lie is not yet reported` : `${c.points} ${POINTS_LIE_WORDS[c.lies]}`),
    not: ({ not: inner }) =>
      matchCondition(inner, {
        latch: (c) => `${c.latch} is not set`,
        count: () => `it is not the case that ${nested(inner)}`,
        selector: (c) => `${c.selector} is not ${c.is}`,
        aspect: (c) => `${c.aspect} is not asked to show ${c.is}`,
        points: (c) => (c.lies === "unknown" ? `where ${c.points} lie has been reported` : `${c.points} ${POINTS_NOT_LIE_WORDS[c.lies]}`),
        not: () => `it is not the case that ${nested(inner)}`,
        all: () => `it is not the case that ${nested(inner)}`,
        any: () => `it is not the case that ${nested(inner)}`,
      }),
    all: (c) => (c.all.length === 0 ? "always" : joinWords(c.all.map(nested), "and")),
    any: (c) => (c.any.length === 0 ? "never" : joinWords(c.any.map(nested), "or")),
  });
}

const POINTS_LIE_WORDS: Record<PointsLie, string> = {
  normal: "lie normal",
  reverse: "lie reverse",
  moving: "are moving",
};
const POINTS_NOT_LIE_WORDS: Record<PointsLie, string> = {
  normal: "do not lie normal",
  reverse: "do not lie reverse",
  moving: "are not moving",
};

/** An action as words, e.g. `add 1 to mainApproach`, `show clear on M1`. */
export function describeAction(action: Action): string {
  return matchAction(action, {
    set: (a) => `set ${a.set}`,
    clear: (a) => `clear ${a.clear}`,
    add: (a) => (a.by < 0 ? `take ${-a.by} from ${a.add}` : `add ${a.by} to ${a.add}`),
    zero: (a) => `set ${a.zero} to 0`,
    select: (a) => `set ${a.select} to ${a.value}`,
    show: (a) => `show ${a.aspect} on ${a.show}`,
    throw: (a) => `throw ${a.throw} ${a.to}`,
    alarm: (a) => `raise the alarm "${a.alarm}"`,
  });
}

function describeTrigger(trigger: Trigger): string {
  return matchTrigger(trigger, {
    standing: () => "Whenever",
    pass: (t) => `When a wheelset passes ${t.pass}`,
    moved: (t) => `When ${t.moved} are reported lying otherwise`,
    quiet: (t) => {
      const seconds = t.ms / 1000;
      const span = t.ms % 1000 === 0 ? `${seconds} s` : `${t.ms} ms`;
      return `When ${t.quiet} has been quiet for ${span}`;
    },
  });
}

/** A trigger on its own, e.g. in a list of what changed: "When a wheelset passes MA". */
export function describeTriggerAlone(trigger: Trigger): string {
  return trigger === "standing" ? "Whenever the rulebook settles (standing rule)" : describeTrigger(trigger);
}

/**
 * A rule as one sentence: trigger, condition, then the actions in order.
 * Standing rules read "Whenever <condition>: …"; event rules "When …, if <condition>: …".
 */
export function describeRule(rule: Pick<Rule, "on" | "if" | "do">): string {
  const actions = rule.do.length === 0 ? "do nothing" : rule.do.map(describeAction).join(", ");
  const trigger = describeTrigger(rule.on);
  if (rule.on === "standing") {
    return `${trigger} ${rule.if ? describeCondition(rule.if) : "the rulebook settles"}: ${actions}.`;
  }
  return rule.if ? `${trigger}, if ${describeCondition(rule.if)}: ${actions}.` : `${trigger}: ${actions}.`;
}
