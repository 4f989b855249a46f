/**
 * Rules in plain English, for the readable rulebook view and the printed clubroom copy.
 *
 * @example
 * describeRule({ id: "main-approach", on: { pass: "MA" }, do: [{ add: "mainApproach", by: 1 }] });
 * // "When a wheelset passes MA: add 1 to mainApproach."
 */
import type { Action, Comparison, Condition, Rule, Trigger } from "./schema";

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
  if ("latch" in condition) return `${condition.latch} is set`;
  if ("count" in condition) return `${condition.count} ${COMPARISON_WORDS[condition.op]} ${condition.value}`;
  if ("selector" in condition) return `${condition.selector} is ${condition.is}`;
  if ("aspect" in condition) return `${condition.aspect} is asked to show ${condition.is}`;
  if ("not" in condition) {
    const inner = condition.not;
    if ("latch" in inner) return `${inner.latch} is not set`;
    if ("selector" in inner) return `${inner.selector} is not ${inner.is}`;
    if ("aspect" in inner) return `${inner.aspect} is not asked to show ${inner.is}`;
    return `it is not the case that ${nested(inner)}`;
  }
  if ("all" in condition) {
    if (condition.all.length === 0) return "always";
    return joinWords(condition.all.map(nested), "and");
  }
  if (condition.any.length === 0) return "never";
  return joinWords(condition.any.map(nested), "or");
}

/** An action as words, e.g. `add 1 to mainApproach`, `show clear on M1`. */
export function describeAction(action: Action): string {
  if ("set" in action) return `set ${action.set}`;
  if ("clear" in action) return `clear ${action.clear}`;
  if ("add" in action) {
    return action.by < 0 ? `take ${-action.by} from ${action.add}` : `add ${action.by} to ${action.add}`;
  }
  if ("zero" in action) return `set ${action.zero} to 0`;
  if ("select" in action) return `set ${action.select} to ${action.value}`;
  if ("show" in action) return `show ${action.aspect} on ${action.show}`;
  return `raise the alarm "${action.alarm}"`;
}

function describeTrigger(trigger: Trigger): string {
  if (trigger === "standing") return "Whenever";
  if ("pass" in trigger) return `When a wheelset passes ${trigger.pass}`;
  const seconds = trigger.ms / 1000;
  const span = trigger.ms % 1000 === 0 ? `${seconds} s` : `${trigger.ms} ms`;
  return `When ${trigger.quiet} has been quiet for ${span}`;
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
