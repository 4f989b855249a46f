/**
 * One key order for rulebooks, used wherever a rulebook is written out (export, the stored
 * JSON, the editor's JSON tab), so a file reads the same top to bottom every time:
 * `format`, the declarations (`latches`, `counters`, `selectors`, `initial`), `rules`,
 * `proving`; within a rule `id`, `note`, `on`, `if`, `do`; within a trigger, condition or
 * action its naming key first (`{ "show": "M1", "aspect": "clear" }`).
 *
 * Names inside the declarations keep the author's order: they are the author's list, and
 * JSON objects keep insertion order. Keys this module does not know keep their place after
 * the known ones, so a newer format's fields are never dropped.
 *
 * @example
 * JSON.stringify(canonicalRulebook(rulebook), null, 2)
 */

/** Top level of a rulebook. */
export const RULEBOOK_KEY_ORDER = ["format", "latches", "counters", "selectors", "initial", "rules", "proving"] as const;
export const RULE_KEY_ORDER = ["id", "note", "on", "if", "do"] as const;
export const PROVING_KEY_ORDER = ["routes", "conflicts", "priority", "maxAxles", "maxTrainsPerRoute"] as const;
export const ROUTE_KEY_ORDER = ["id", "signal", "approach", "entry", "points", "exit"] as const;
const SELECTOR_KEY_ORDER = ["values", "initial"] as const;
/**
 * Triggers, conditions and actions: the key that names the form comes before its fields.
 * One list serves all three, because in each object exactly one naming key is present and it
 * is listed before every field key (`show` before `aspect`, `count` before `op` and `value`).
 */
const TERM_KEY_ORDER = [
  "pass", "moved", "quiet", "ms",
  "count", "op", "select", "show", "throw", "add", "set", "clear", "zero", "alarm",
  "latch", "selector", "aspect", "points", "not", "all", "any",
  "is", "lies", "by", "value", "to",
] as const;

type Json = unknown;

/** A copy of `value` with its own keys in `order`, unknown keys after them in their old order. */
export function orderKeys<T>(value: T, order: readonly string[]): T {
  if (value === null || typeof value !== "object" || Array.isArray(value)) return value;
  const source = value as Record<string, unknown>;
  const out: Record<string, unknown> = {};
  for (const key of order) if (key in source && source[key] !== undefined) out[key] = source[key];
  for (const key of Object.keys(source)) if (!(key in out) && source[key] !== undefined) out[key] = source[key];
  return out as T;
}

function term(value: Json): Json {
  if (typeof value !== "object" || value === null || Array.isArray(value)) return value;
  const ordered = orderKeys(value as Record<string, Json>, TERM_KEY_ORDER);
  for (const key of ["not"] as const) if (key in ordered) ordered[key] = term(ordered[key]);
  for (const key of ["all", "any"] as const) if (Array.isArray(ordered[key])) ordered[key] = (ordered[key] as Json[]).map(term);
  return ordered;
}

function mapRecord(value: Json, each: (v: Json) => Json): Json {
  if (typeof value !== "object" || value === null || Array.isArray(value)) return value;
  return Object.fromEntries(Object.entries(value).map(([k, v]) => [k, each(v)]));
}

/**
 * The rulebook with its keys in the canonical order; works on parsed and unparsed rulebooks
 * alike (anything not shaped like a rulebook comes back unchanged in its parts).
 */
export function canonicalRulebook<T>(rulebook: T): T {
  if (typeof rulebook !== "object" || rulebook === null || Array.isArray(rulebook)) return rulebook;
  const top = orderKeys(rulebook as Record<string, Json>, RULEBOOK_KEY_ORDER);
  if ("selectors" in top) top.selectors = mapRecord(top.selectors, (s) => orderKeys(s, SELECTOR_KEY_ORDER));
  if (Array.isArray(top.rules)) {
    top.rules = top.rules.map((rule: Json) => {
      const r = orderKeys(rule as Record<string, Json>, RULE_KEY_ORDER);
      if (typeof r !== "object" || r === null) return r;
      if ("on" in r) r.on = term(r.on);
      if ("if" in r) r.if = term(r.if);
      if (Array.isArray(r.do)) r.do = r.do.map(term);
      return r;
    });
  }
  if (typeof top.proving === "object" && top.proving !== null) {
    const proving = orderKeys(top.proving as Record<string, Json>, PROVING_KEY_ORDER);
    if (Array.isArray(proving.routes)) proving.routes = proving.routes.map((route: Json) => orderKeys(route, ROUTE_KEY_ORDER));
    top.proving = proving;
  }
  return top as T;
}
