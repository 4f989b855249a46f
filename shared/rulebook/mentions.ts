import type { Condition, Rulebook } from "./schema";

/**
 * Every signal a rulebook mentions, in order of first mention: its `initial` aspects, then
 * aspect conditions and show actions rule by rule, then (when asked) the proving routes'
 * signals. The engine runs every one of these; validation checks them against the layout.
 */
export function signalsMentioned(rulebook: Rulebook, options: { includeProving: boolean }): Set<string> {
  const found = new Set<string>(Object.keys(rulebook.initial));
  const visit = (condition: Condition | undefined): void => {
    if (!condition) return;
    if ("aspect" in condition) found.add(condition.aspect);
    else if ("not" in condition) visit(condition.not);
    else if ("all" in condition) condition.all.forEach(visit);
    else if ("any" in condition) condition.any.forEach(visit);
  };
  for (const rule of rulebook.rules) {
    visit(rule.if);
    for (const action of rule.do) if ("show" in action) found.add(action.show);
  }
  if (options.includeProving) for (const route of rulebook.proving?.routes ?? []) found.add(route.signal);
  return found;
}
