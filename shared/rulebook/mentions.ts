import { conditionsIn, matchAction, matchCondition, matchTrigger } from "./kinds";
import { RULEBOOK_FORMAT_1, RULEBOOK_FORMAT_2, type Rulebook, type RulebookFormat } from "./schema";

/**
 * Every signal a rulebook mentions, in order of first mention: its `initial` aspects, then
 * aspect conditions and show actions rule by rule, then (when asked) the proving routes'
 * signals. The engine runs every one of these; validation checks them against the layout.
 */
export function signalsMentioned(rulebook: Rulebook, options: { includeProving: boolean }): Set<string> {
  const found = new Set<string>(Object.keys(rulebook.initial));
  for (const rule of rulebook.rules) {
    for (const c of conditionsIn(rule.if)) {
      const signal = matchCondition<string | null>(c, {
        latch: () => null,
        count: () => null,
        selector: () => null,
        aspect: (a) => a.aspect,
        points: () => null,
        not: () => null,
        all: () => null,
        any: () => null,
      });
      if (signal !== null) found.add(signal);
    }
    for (const action of rule.do) {
      const signal = matchAction<string | null>(action, {
        set: () => null,
        clear: () => null,
        add: () => null,
        zero: () => null,
        select: () => null,
        show: (a) => a.show,
        throw: () => null,
        alarm: () => null,
      });
      if (signal !== null) found.add(signal);
    }
  }
  if (options.includeProving) for (const route of rulebook.proving?.routes ?? []) found.add(route.signal);
  return found;
}

/** Where a rulebook names points: the kinds of use validation and the prover care about. */
export interface PointsMentions {
  /** Every points named anywhere (trigger, condition, action, proving route), sorted by id. */
  all: string[];
  /** Points some `throw` action commands (so they must be power-worked). */
  thrown: Set<string>;
}

/** Every points a rulebook mentions (see {@link PointsMentions}). */
export function pointsMentioned(rulebook: Rulebook): PointsMentions {
  const all = new Set<string>();
  const thrown = new Set<string>();
  for (const rule of rulebook.rules) {
    const moved = matchTrigger<string | null>(rule.on, { standing: () => null, pass: () => null, moved: (t) => t.moved, quiet: () => null });
    if (moved !== null) all.add(moved);
    for (const c of conditionsIn(rule.if)) if ("points" in c) all.add(c.points);
    for (const action of rule.do) {
      if ("throw" in action) {
        all.add(action.throw);
        thrown.add(action.throw);
      }
    }
  }
  for (const route of rulebook.proving?.routes ?? []) for (const id of Object.keys(route.points ?? {})) all.add(id);
  return { all: [...all].sort(), thrown };
}

/**
 * The lowest format a rulebook needs: `/2` when it uses `moved`, `points`, `throw` or a
 * route's `points`, otherwise `/1` (CONTRACT.md §4: files name the lowest format they need).
 */
export function lowestFormat(rulebook: Rulebook): RulebookFormat {
  return pointsMentioned(rulebook).all.length > 0 ? RULEBOOK_FORMAT_2 : RULEBOOK_FORMAT_1;
}
