/**
 * Validation of layout files (CONTRACT.md §3) and rulebooks (§4) with every error listed.
 *
 * Two passes: the zod shape check from `schema.ts`, then — only when the shape is sound —
 * the cross-reference checks that need the whole file (undeclared names, unknown detectors
 * and signals, aspects a signal cannot show, duplicate ids, node wiring). Every error
 * carries a JSONPath from the root of the file that was given, e.g.
 * `$.rulebook.rules[2].do[0].aspect`, so an editor can put the message beside the field.
 *
 * @example
 * const result = validateLayoutFile(JSON.parse(text));
 * if (!result.ok) for (const e of result.errors) console.log(`${e.path}: ${e.message}`);
 */
import type { z } from "zod";
import { LAYOUT_FORMAT, layoutFileSchema, layoutRecordsSchema, pointsWorking, type LayoutFile, type LayoutRecords } from "../layout/schema";
import { signalsMentioned } from "./mentions";
import { ACTION_KINDS, CONDITION_KINDS, TRIGGER_KINDS, matchAction, matchCondition, matchTrigger } from "./kinds";
import { ID_PATTERN, RULEBOOK_FORMAT, RULEBOOK_FORMAT_1, RULEBOOK_FORMAT_2, rulebookSchema, type Aspect, type Condition, type Rulebook } from "./schema";

export interface ValidationError {
  /** JSONPath from the root of the validated file, `$` being the root. */
  path: string;
  message: string;
}

export type LayoutValidation = { ok: true; layout: LayoutFile } | { ok: false; errors: ValidationError[] };
export type LayoutRecordsValidation = { ok: true; records: LayoutRecords } | { ok: false; errors: ValidationError[] };
export type RulebookValidation = { ok: true; rulebook: Rulebook } | { ok: false; errors: ValidationError[] };

/** What a rulebook can be checked against when it belongs to a known layout. */
export interface RulebookContext {
  detectors: string[];
  signals: { id: string; aspects: Aspect[] }[];
  /** The layout's points and how each is worked (absent: points are not checked). */
  points?: { id: string; worked: "power" | "hand" }[];
  /** Points some node reports (absent: not checked). */
  reportedPoints?: string[];
}

const PLAIN_KEY = /^[A-Za-z_$][A-Za-z0-9_$]*$/;

/** `["rules", 2, "do", 0, "aspect"]` → `$.rules[2].do[0].aspect`, starting from `base`. */
export function toJsonPath(segments: readonly PropertyKey[], base = "$"): string {
  let path = base;
  for (const segment of segments) {
    if (typeof segment === "number") path += `[${segment}]`;
    else if (typeof segment === "string" && PLAIN_KEY.test(segment)) path += `.${segment}`;
    else path += `[${JSON.stringify(String(segment))}]`;
  }
  return path;
}

// ---------------------------------------------------------------------------------------
// Shape errors (zod issues → ValidationError)
// ---------------------------------------------------------------------------------------

type Issue = z.core.$ZodIssue;

function isRootIssue(issue: Issue): boolean {
  return issue.path.length === 0;
}

/** Name of the kind of thing a union sits at, for a readable message when no form fits. */
function unionSubject(path: readonly PropertyKey[]): string {
  const last = [...path].reverse().find((segment) => typeof segment === "string");
  if (last === "on") return `a trigger: "standing", ${TRIGGER_KINDS.filter((k) => k !== "standing").map((k) => (k === "quiet" ? "{ quiet, ms }" : `{ ${k} }`)).join(", ")}`;
  if (last === "do") return `an action: ${ACTION_KINDS.join(", ")}`;
  return `a condition: ${CONDITION_KINDS.join(", ")}`;
}

function collectIssues(issues: readonly Issue[], prefix: readonly PropertyKey[], out: ValidationError[]): void {
  for (const issue of issues) {
    const path = [...prefix, ...issue.path];
    if (issue.code === "invalid_union" && "errors" in issue && Array.isArray(issue.errors) && issue.errors.length > 0) {
      // Conditions, actions and triggers are unions keyed by which fields are present. Report
      // the errors of the form the author evidently meant: the branch whose own keys fit.
      let best: readonly Issue[] | undefined;
      let bestScore = Number.POSITIVE_INFINITY;
      for (const branch of issue.errors as Issue[][]) {
        const score = branch.filter(isRootIssue).length * 1000 + branch.length;
        if (score < bestScore) {
          best = branch;
          bestScore = score;
        }
      }
      if (best && !best.some(isRootIssue)) {
        collectIssues(best, path, out);
      } else {
        out.push({ path: toJsonPath(path), message: `is not ${unionSubject(path)}` });
      }
      continue;
    }
    if (issue.code === "unrecognized_keys") {
      for (const key of issue.keys) out.push({ path: toJsonPath([...path, key]), message: "is not a known field" });
      continue;
    }
    out.push({ path: toJsonPath(path), message: issue.message });
  }
}

function shapeErrors(error: z.ZodError, prefix: readonly PropertyKey[] = []): ValidationError[] {
  const out: ValidationError[] = [];
  collectIssues(error.issues, prefix, out);
  return out;
}

// ---------------------------------------------------------------------------------------
// Salvage: cross-reference checks on a file that also has shape errors
// ---------------------------------------------------------------------------------------

/**
 * How to stand in for a malformed part. Keys are paths with `*` for an array index. An
 * element placeholder keeps the original's `id` and `line` when those are well formed (so
 * references to it still resolve) and otherwise takes a marked id that errors are then
 * filtered on.
 */
type Placeholder = (index: number, original: unknown) => unknown;
const SALVAGE_MARK = "__salvaged_";
const keptOr = (original: unknown, field: string, fallback: string): string => {
  const value = typeof original === "object" && original !== null ? (original as Record<string, unknown>)[field] : undefined;
  return typeof value === "string" && ID_PATTERN.test(value) ? value : fallback;
};
const idOf = (index: number, original: unknown) => keptOr(original, "id", `${SALVAGE_MARK}${index}`);
const lineOf = (original: unknown) => keptOr(original, "line", `${SALVAGE_MARK}line`);

const RULEBOOK_PLACEHOLDERS: Record<string, Placeholder> = {
  format: () => RULEBOOK_FORMAT,
  "rules.*": (i, original) => ({ id: idOf(i, original), on: "standing", do: [] }),
  rules: () => [],
  latches: () => ({}),
  counters: () => ({}),
  selectors: () => ({}),
  initial: () => ({}),
  proving: () => undefined,
};
const LAYOUT_PLACEHOLDERS: Record<string, Placeholder> = {
  format: () => LAYOUT_FORMAT,
  slug: () => "placeholder",
  name: () => "placeholder",
  scale: () => ({ name: "placeholder", ratio: 1 }),
  schematic: () => undefined,
  lines: () => [{ id: `${SALVAGE_MARK}line`, name: "placeholder" }],
  "lines.*": (i, original) => ({ id: idOf(i, original), name: "placeholder" }),
  "detectors.*": (i, original) => ({ id: idOf(i, original), name: "placeholder", line: lineOf(original), at: 0 }),
  "signals.*": (i, original) => ({ id: idOf(i, original), name: "placeholder", line: lineOf(original), at: 0, aspects: ["danger", "caution", "clear"] }),
  "points.*": (i, original) => ({ id: idOf(i, original), name: "placeholder", line: lineOf(original), at: 0 }),
  "nodes.*": (i, original) => ({ id: idOf(i, original), name: "placeholder", detectors: [], signals: [] }),
  detectors: () => [],
  signals: () => [],
  points: () => [],
  nodes: () => [],
  rulebook: () => ({ format: RULEBOOK_FORMAT, rules: [] }),
  ...Object.fromEntries(Object.entries(RULEBOOK_PLACEHOLDERS).map(([key, value]) => [`rulebook.${key}`, value])),
};

/** A salvaged copy and the table keys of the parts replaced in it. */
interface Salvaged<T> {
  value: T;
  /** E.g. `detectors` when the whole list was replaced (too long, not a list): what refers into it cannot be checked. */
  replaced: ReadonlySet<string>;
}

/**
 * Replaces every malformed part named by the zod issues with a placeholder, choosing the
 * deepest part the table knows how to stand in for, and parses again. Returns null when
 * some issue sits where no placeholder fits (then only the shape errors are reported).
 */
function salvage<T>(input: unknown, error: z.ZodError, table: Record<string, Placeholder>, schema: z.ZodType<T>): Salvaged<T> | null {
  if (typeof input !== "object" || input === null || Array.isArray(input)) return null;
  const copy = structuredClone(input) as Record<string, unknown>;
  const replaced = new Set<string>();
  for (const issue of error.issues) {
    const key = replaceDeepestKnownPart(copy, issue.path, table);
    if (key === null) return null;
    replaced.add(key);
  }
  const again = schema.safeParse(copy);
  return again.success ? { value: again.data, replaced } : null;
}

/** Returns the table key of the part replaced, or null when no placeholder fits. */
function replaceDeepestKnownPart(root: Record<string, unknown>, path: readonly PropertyKey[], table: Record<string, Placeholder>): string | null {
  for (let length = path.length; length >= 1; length--) {
    const prefix = path.slice(0, length);
    const key = prefix.map((segment) => (typeof segment === "number" ? "*" : String(segment))).join(".");
    const placeholder = table[key];
    if (!placeholder) continue;
    let parent: unknown = root;
    for (const segment of prefix.slice(0, -1)) {
      if (typeof parent !== "object" || parent === null) return null;
      parent = (parent as Record<PropertyKey, unknown>)[segment as string];
    }
    if (typeof parent !== "object" || parent === null) return null;
    const last = prefix[prefix.length - 1];
    const value = placeholder(typeof last === "number" ? last : 0, (parent as Record<PropertyKey, unknown>)[last as string]);
    if (value === undefined) delete (parent as Record<PropertyKey, unknown>)[last as string];
    else (parent as Record<PropertyKey, unknown>)[last as string] = value;
    return key;
  }
  return null;
}

/** Cross-reference errors of a salvaged file, minus anything about the placeholders or already reported. */
function crossReferenceErrorsOf<T>(
  salvaged: Salvaged<T>,
  check: (value: T, out: ValidationError[], replaced: ReadonlySet<string>) => void,
  shape: readonly ValidationError[],
): ValidationError[] {
  const found: ValidationError[] = [];
  check(salvaged.value, found, salvaged.replaced);
  const shapePaths = shape.map((e) => e.path);
  return found.filter(
    (e) =>
      !e.message.includes(SALVAGE_MARK) &&
      !shapePaths.some((p) => e.path === p || e.path.startsWith(p + ".") || e.path.startsWith(p + "[")),
  );
}

// ---------------------------------------------------------------------------------------
// Semantic checks
// ---------------------------------------------------------------------------------------

function duplicates<T extends { id: string }>(
  items: readonly T[],
  base: string,
  what: string,
  errors: ValidationError[],
): Set<string> {
  const seen = new Set<string>();
  items.forEach((item, index) => {
    if (seen.has(item.id)) {
      errors.push({ path: `${base}[${index}].id`, message: `duplicate ${what} id "${item.id}"` });
    }
    seen.add(item.id);
  });
  return seen;
}

/**
 * A context part left out is not checked against: detectors unchecked, signals those the
 * rulebook mentions (as without a context). checkLayout leaves out lists malformed as a whole.
 */
type CheckContext = Partial<RulebookContext>;

function checkRulebook(rulebook: Rulebook, base: string, context: CheckContext | undefined, errors: ValidationError[]): void {
  const latches = new Set(Object.keys(rulebook.latches));
  const counters = new Set(Object.keys(rulebook.counters));
  const selectors = rulebook.selectors;
  const detectors = context?.detectors ? new Set(context.detectors) : undefined;
  const aspectsOf = new Map<string, Set<Aspect>>();
  for (const signal of context?.signals ?? []) aspectsOf.set(signal.id, new Set(signal.aspects));
  const signals = context?.signals ? new Set(aspectsOf.keys()) : signalsMentioned(rulebook, { includeProving: false });
  const pointsOf = context?.points ? new Map(context.points.map((p) => [p.id, p.worked])) : undefined;

  const checkSignal = (signal: string, path: string): boolean => {
    if (signals.has(signal)) return true;
    errors.push({ path, message: `unknown signal "${signal}"` });
    return false;
  };
  const checkAspect = (signal: string, aspect: Aspect, path: string): void => {
    const allowed = aspectsOf.get(signal);
    if (allowed && !allowed.has(aspect)) {
      errors.push({ path, message: `signal "${signal}" cannot show ${aspect} (it shows ${[...allowed].join(", ")})` });
    }
  };
  const checkSelectorValue = (selector: string, value: string, path: string): void => {
    const declared = selectors[selector];
    if (declared && !declared.values.includes(value)) {
      errors.push({ path, message: `"${value}" is not a value of selector "${selector}" (${declared.values.join(", ")})` });
    }
  };
  const checkDetector = (detector: string, path: string): void => {
    if (detectors && !detectors.has(detector)) errors.push({ path, message: `unknown detector "${detector}"` });
  };

  for (const [name, selector] of Object.entries(selectors)) {
    const path = `${base}.selectors${toJsonPath([name], "")}`;
    if (!selector.values.includes(selector.initial)) {
      errors.push({ path: `${path}.initial`, message: `"${selector.initial}" is not one of this selector's values` });
    }
    const seen = new Set<string>();
    selector.values.forEach((value, index) => {
      if (seen.has(value)) errors.push({ path: `${path}.values[${index}]`, message: `duplicate value "${value}"` });
      seen.add(value);
    });
  }

  for (const [signal, aspect] of Object.entries(rulebook.initial)) {
    const path = `${base}.initial${toJsonPath([signal], "")}`;
    if (checkSignal(signal, path)) checkAspect(signal, aspect, path);
  }

  // A /1 file may not use what /2 added; say so where it is used.
  const needsTwo = (path: string, what: string): void => {
    if (rulebook.format === RULEBOOK_FORMAT_1) {
      errors.push({ path, message: `${what} needs format "${RULEBOOK_FORMAT_2}" (this file says "${RULEBOOK_FORMAT_1}")` });
    }
  };
  const checkPoints = (points: string, path: string): boolean => {
    if (pointsOf === undefined || pointsOf.has(points)) return true;
    errors.push({ path, message: `unknown points "${points}"` });
    return false;
  };

  const checkCondition = (condition: Condition, path: string): void => {
    matchCondition(condition, {
      latch: (c) => {
        if (!latches.has(c.latch)) errors.push({ path: `${path}.latch`, message: `undeclared latch "${c.latch}"` });
      },
      count: (c) => {
        if (!counters.has(c.count)) errors.push({ path: `${path}.count`, message: `undeclared counter "${c.count}"` });
      },
      selector: (c) => {
        if (!(c.selector in selectors)) {
          errors.push({ path: `${path}.selector`, message: `undeclared selector "${c.selector}"` });
        } else checkSelectorValue(c.selector, c.is, `${path}.is`);
      },
      aspect: (c) => {
        if (checkSignal(c.aspect, `${path}.aspect`)) checkAspect(c.aspect, c.is, `${path}.is`);
      },
      points: (c) => {
        needsTwo(`${path}.points`, "a points condition");
        checkPoints(c.points, `${path}.points`);
      },
      not: (c) => checkCondition(c.not, `${path}.not`),
      all: (c) => c.all.forEach((inner, index) => checkCondition(inner, `${path}.all[${index}]`)),
      any: (c) => c.any.forEach((inner, index) => checkCondition(inner, `${path}.any[${index}]`)),
    });
  };

  const ruleIds = new Set<string>();
  rulebook.rules.forEach((rule, ruleIndex) => {
    const rulePath = `${base}.rules[${ruleIndex}]`;
    if (ruleIds.has(rule.id)) errors.push({ path: `${rulePath}.id`, message: `duplicate rule id "${rule.id}"` });
    ruleIds.add(rule.id);
    matchTrigger(rule.on, {
      standing: () => undefined,
      pass: (t) => checkDetector(t.pass, `${rulePath}.on.pass`),
      moved: (t) => {
        needsTwo(`${rulePath}.on.moved`, "a moved trigger");
        checkPoints(t.moved, `${rulePath}.on.moved`);
      },
      quiet: (t) => checkDetector(t.quiet, `${rulePath}.on.quiet`),
    });
    if (rule.if) checkCondition(rule.if, `${rulePath}.if`);
    rule.do.forEach((action, actionIndex) => {
      const path = `${rulePath}.do[${actionIndex}]`;
      matchAction(action, {
        set: (a) => {
          if (!latches.has(a.set)) errors.push({ path: `${path}.set`, message: `undeclared latch "${a.set}"` });
        },
        clear: (a) => {
          if (!latches.has(a.clear)) errors.push({ path: `${path}.clear`, message: `undeclared latch "${a.clear}"` });
        },
        add: (a) => {
          if (!counters.has(a.add)) errors.push({ path: `${path}.add`, message: `undeclared counter "${a.add}"` });
        },
        zero: (a) => {
          if (!counters.has(a.zero)) errors.push({ path: `${path}.zero`, message: `undeclared counter "${a.zero}"` });
        },
        select: (a) => {
          if (!(a.select in selectors)) {
            errors.push({ path: `${path}.select`, message: `undeclared selector "${a.select}"` });
          } else checkSelectorValue(a.select, a.value, `${path}.value`);
        },
        show: (a) => {
          if (checkSignal(a.show, `${path}.show`)) checkAspect(a.show, a.aspect, `${path}.aspect`);
        },
        throw: (a) => {
          needsTwo(`${path}.throw`, "a throw action");
          if (checkPoints(a.throw, `${path}.throw`) && pointsOf?.get(a.throw) === "hand") {
            errors.push({ path: `${path}.throw`, message: `points "${a.throw}" are worked by hand: only power-worked points can be thrown` });
          }
        },
        alarm: () => {
          if (rule.on === "standing") {
            errors.push({ path: `${path}.alarm`, message: "a standing rule cannot raise an alarm (it would repeat on every settle)" });
          }
        },
      });
    });
  });

  const proving = rulebook.proving;
  if (proving) {
    const provingPath = `${base}.proving`;
    const routeIds = duplicates(proving.routes, `${provingPath}.routes`, "route", errors);
    proving.routes.forEach((route, index) => {
      const path = `${provingPath}.routes[${index}]`;
      checkSignal(route.signal, `${path}.signal`);
      route.approach.forEach((detector, i) => checkDetector(detector, `${path}.approach[${i}]`));
      checkDetector(route.entry, `${path}.entry`);
      route.exit.forEach((detector, i) => checkDetector(detector, `${path}.exit[${i}]`));
      for (const id of Object.keys(route.points ?? {})) {
        const at = `${path}.points${toJsonPath([id], "")}`;
        needsTwo(at, "points on a proving route");
        // The prover starts from a report of where they lie, so some board must report them.
        if (checkPoints(id, at) && context?.reportedPoints && !context.reportedPoints.includes(id)) {
          errors.push({ path: at, message: `no node reports where points "${id}" lie (add them to a node's points)` });
        }
      }
    });
    proving.conflicts.forEach((pair, index) => {
      pair.forEach((route, side) => {
        if (!routeIds.has(route)) {
          errors.push({ path: `${provingPath}.conflicts[${index}][${side}]`, message: `unknown route "${route}"` });
        }
      });
    });
    if (proving.priority !== undefined && !routeIds.has(proving.priority)) {
      errors.push({ path: `${provingPath}.priority`, message: `unknown route "${proving.priority}"` });
    }
  }
}

/** No list was replaced: every reference can be checked. */
const NOTHING_REPLACED: ReadonlySet<string> = new Set();

/**
 * The records' own cross-references: ids unique, lines known, nodes serving what exists.
 * References into a list in `replaced` (one too long or malformed as a whole, reported as
 * such) are not checked: each would be "unknown" and bury the one error that matters.
 */
function checkRecords(layout: LayoutRecords, errors: ValidationError[], replaced = NOTHING_REPLACED): void {
  const lines = duplicates(layout.lines, "$.lines", "line", errors);
  const detectors = duplicates(layout.detectors, "$.detectors", "detector", errors);
  const signals = duplicates(layout.signals, "$.signals", "signal", errors);
  const pointsIds = duplicates(layout.points, "$.points", "points", errors);
  duplicates(layout.nodes, "$.nodes", "node", errors);

  const onLine = (items: readonly { line: string }[], base: string): void => {
    if (replaced.has("lines")) return;
    items.forEach((item, index) => {
      if (!lines.has(item.line)) errors.push({ path: `${base}[${index}].line`, message: `unknown line "${item.line}"` });
    });
  };
  onLine(layout.detectors, "$.detectors");
  onLine(layout.signals, "$.signals");
  onLine(layout.points, "$.points");

  layout.signals.forEach((signal, index) => {
    if (!signal.aspects.includes("danger")) {
      errors.push({ path: `$.signals[${index}].aspects`, message: `signal "${signal.id}" must be able to show danger` });
    }
  });

  const servedBy = new Map<string, string>();
  layout.nodes.forEach((node, nodeIndex) => {
    node.detectors.forEach((detector, index) => {
      const path = `$.nodes[${nodeIndex}].detectors[${index}]`;
      if (!replaced.has("detectors") && !detectors.has(detector)) errors.push({ path, message: `unknown detector "${detector}"` });
      const other = servedBy.get(detector);
      if (other !== undefined && other !== node.id) {
        errors.push({ path, message: `detector "${detector}" is already served by node "${other}"` });
      } else if (other === node.id) {
        errors.push({ path, message: `detector "${detector}" is listed twice` });
      }
      servedBy.set(detector, node.id);
    });
    node.signals.forEach((signal, index) => {
      if (!replaced.has("signals") && !signals.has(signal)) errors.push({ path: `$.nodes[${nodeIndex}].signals[${index}]`, message: `unknown signal "${signal}"` });
    });
    (node.points ?? []).forEach((id, index) => {
      if (!replaced.has("points") && !pointsIds.has(id)) errors.push({ path: `$.nodes[${nodeIndex}].points[${index}]`, message: `unknown points "${id}"` });
    });
  });
}

/** What a layout's records offer a rulebook to refer to. */
export function rulebookContextOf(records: Pick<LayoutRecords, "detectors" | "signals"> & Partial<Pick<LayoutRecords, "points" | "nodes">>): RulebookContext {
  return {
    detectors: records.detectors.map((detector) => detector.id),
    signals: records.signals.map((signal) => ({ id: signal.id, aspects: signal.aspects })),
    points: records.points?.map((points) => ({ id: points.id, worked: pointsWorking(points) })),
    reportedPoints: records.nodes?.flatMap((node) => node.points ?? []),
  };
}

function checkLayout(layout: LayoutFile, errors: ValidationError[], replaced = NOTHING_REPLACED): void {
  checkRecords(layout, errors, replaced);
  // As in checkRecords: what refers into a list replaced as a whole is not checked.
  const context: CheckContext = rulebookContextOf(layout);
  if (replaced.has("detectors")) delete context.detectors;
  if (replaced.has("signals")) delete context.signals;
  if (replaced.has("points")) delete context.points;
  if (replaced.has("nodes")) delete context.reportedPoints;
  checkRulebook(layout.rulebook, "$.rulebook", context, errors);
}

/**
 * Checks a layout file (`blocklight.layout/1`, rulebook included) and lists every error.
 * Shape errors come first; cross-references are then checked on a salvaged copy in which
 * each malformed element is replaced by a harmless placeholder (see `salvage`), so one
 * upload lists every mistake rather than the first kind only.
 */
export function validateLayoutFile(input: unknown): LayoutValidation {
  const parsed = layoutFileSchema.safeParse(input);
  if (!parsed.success) {
    const errors = shapeErrors(parsed.error);
    const salvaged = salvage(input, parsed.error, LAYOUT_PLACEHOLDERS, layoutFileSchema);
    if (salvaged) errors.push(...crossReferenceErrorsOf(salvaged, checkLayout, errors));
    return { ok: false, errors };
  }
  const errors: ValidationError[] = [];
  checkLayout(parsed.data, errors);
  return errors.length > 0 ? { ok: false, errors } : { ok: true, layout: parsed.data };
}

/**
 * Checks a layout's records (a layout file without its rulebook, as `PUT /api/layouts/:slug`
 * sends them) and lists every error, the same way as {@link validateLayoutFile}.
 */
export function validateLayoutRecords(input: unknown): LayoutRecordsValidation {
  const parsed = layoutRecordsSchema.safeParse(input);
  if (!parsed.success) {
    const errors = shapeErrors(parsed.error);
    const table = Object.fromEntries(Object.entries(LAYOUT_PLACEHOLDERS).filter(([key]) => !key.startsWith("rulebook")));
    const salvaged = salvage(input, parsed.error, table, layoutRecordsSchema);
    if (salvaged) errors.push(...crossReferenceErrorsOf(salvaged, checkRecords, errors));
    return { ok: false, errors };
  }
  const errors: ValidationError[] = [];
  checkRecords(parsed.data, errors);
  return errors.length > 0 ? { ok: false, errors } : { ok: true, records: parsed.data };
}

/**
 * Checks a rulebook file (`blocklight.rulebook/1`) on its own or against a layout's detectors
 * and signals. Without a context the known signals are those the rulebook itself mentions
 * (initial aspects, show actions, aspect conditions) and aspect lists are not checked.
 */
export function validateRulebookFile(input: unknown, context?: RulebookContext): RulebookValidation {
  const parsed = rulebookSchema.safeParse(input);
  if (!parsed.success) {
    const errors = shapeErrors(parsed.error);
    const salvaged = salvage(input, parsed.error, RULEBOOK_PLACEHOLDERS, rulebookSchema);
    if (salvaged) errors.push(...crossReferenceErrorsOf(salvaged, (rb, out) => checkRulebook(rb, "$", context, out), errors));
    return { ok: false, errors };
  }
  const errors: ValidationError[] = [];
  checkRulebook(parsed.data, "$", context, errors);
  return errors.length > 0 ? { ok: false, errors } : { ok: true, rulebook: parsed.data };
}
