/**
 * The rulebook engine: one pure step function shared by the live runtime, the simulator,
 * replay and the prover (CONTRACT.md §4).
 *
 * `step(rulebook, state, input)` returns a new state and the list of changes it made, each
 * naming the rule or signaller command responsible, so a screen can answer "why is M1 at
 * danger?". Nothing here reads a clock or does I/O; time comes in with the input. Inputs are
 * never mutated: unchanged parts of the state are shared between the old and new state, so
 * callers must treat states as read-only.
 *
 * The rulebook is compiled once per rulebook object (cached in a WeakMap) into closures,
 * per-detector rule lists and the standing rule list, because the prover calls `step`
 * millions of times. Compile a rulebook you have edited again by passing a new object.
 *
 * ## Decisions where the contract is silent
 * - **Alarm action**: `{ alarm: TEXT }` changes no state; it adds a change
 *   `{ kind: "alarm", name: <rule id>, to: "rule-alarm", detail: TEXT }`. It never faults.
 * - **Alarm changes** in general: `kind: "alarm"`, `name` = what it is about (rule id, counter,
 *   or `"rulebook"`), `to` = the alarm code (`ENGINE_ALARM` in engineAlarms.ts: `rule-alarm`, `count-underflow`, `rule-loop`),
 *   `detail` = readable text.
 * - **Unknown detectors**: a pulse at a detector no rule mentions still advances the clock,
 *   fires due quiet triggers and settles; it is otherwise ignored (no error, no change).
 * - **Out-of-order input**: the clock never goes back (max). A quiet trigger armed by a pulse
 *   whose `at` is earlier than the clock gets deadline `at + ms` as written; if that is already
 *   past, it fires at the start of the next input.
 * - **Commands** fire due quiet triggers first, like every other input (§4 step 1).
 * - **"Would change the state"** (settle) is judged on the rule's net effect on latches,
 *   counters, selectors and wanted aspects. A standing rule whose only effect would be a
 *   counter held at 0 by the floor does not run (and so raises no underflow alarm).
 * - **Rule loop**: a settle may run 64 rules; when a 65th would run, it does not: the
 *   rulebook is faulted instead (`faulted.reason` says which rule), every signal shows danger
 *   (a `shown` change for each that was not already at danger), a `fault` and an `alarm`
 *   change are emitted, and the state reached after 64 runs is kept for diagnosis.
 * - **While faulted**: pulses and ticks advance the clock only (no rules, no quiet arming or
 *   firing). `hold`/`release` still work. `set`/`clear`/`zero` change their value (they are
 *   audited by the caller) but no rules run. Only `restart` clears the fault.
 * - **Restart** resets latches, counters, selectors, wanted aspects and quiet triggers to the
 *   rulebook's initial values and clears the fault, then settles. Holds are kept: a signaller's
 *   hold is released only by `release`, never as a side effect.
 * - **Commands that change nothing** (hold of a held signal, release of a free one, set of a
 *   set latch, zero of a zero counter) are no-ops with no changes. Commands naming a signal,
 *   latch or counter the rulebook does not have are ignored the same way.
 * - **Change attribution**: a change made by a rule has `rule`; one made by a command has
 *   `command` and `detail` = the command's reason (if any). Quiet arming is attributed to the
 *   pulse: `rule` = the quiet rule's id. Changes from the settle after a command carry the
 *   standing rule's id.
 * - **Signals** of a rulebook (`signalIds`) are the keys of `initial`, then every signal named
 *   by a show action, an aspect condition or a proving route, in order of first mention. A
 *   signal not in `initial` starts with wanted aspect danger.
 */
import type { Change, ChangeKind, ChangeOf, EngineFault } from "./changes";
import { ENGINE_ALARM } from "./engineAlarms";
import { matchAction, matchCondition, matchTrigger, unreachable } from "./kinds";
import { signalsMentioned } from "./mentions";
import type { Action, Aspect, Condition, PointsLie, PointsPosition, Rule, Rulebook } from "./schema";

export type EngineInput =
  | { type: "pulse"; detector: string; at: number }
  | { type: "tick"; at: number }
  /** A board's report of where points lie (CONTRACT.md §2 `…/node/{node}/points`). */
  | { type: "points"; points: string; lies: PointsLie; at: number }
  | { type: "command"; at: number; command: "hold" | "release"; signal: string; by?: string; reason?: string }
  | { type: "command"; at: number; command: "set" | "clear"; latch: string; by?: string; reason?: string }
  | { type: "command"; at: number; command: "zero"; counter: string; by?: string; reason?: string }
  | { type: "command"; at: number; command: "restart"; by?: string; reason?: string };

export interface EngineState {
  /** Milliseconds; the latest input time seen. */
  clock: number;
  latches: Record<string, boolean>;
  counters: Record<string, number>;
  selectors: Record<string, string>;
  /** The aspect the rules last asked for on each signal. */
  wanted: Record<string, Aspect>;
  /** Signals held at danger by a signaller, sorted. */
  held: string[];
  /** Armed quiet triggers: rule id → deadline (ms). */
  quiet: Record<string, number>;
  faulted: null | EngineFault;
  /** Where each points lie as last reported (absent: `unknown`, no report yet). */
  points: Record<string, PointsLie>;
  /** Where the rules last threw each power-worked points (absent: never thrown). */
  thrown: Record<string, PointsPosition>;
}

export type { Change, ChangeKind, ChangeOf, EngineFault } from "./changes";

export interface StepResult {
  state: EngineState;
  changes: Change[];
}

/** Most standing-rule runs allowed in one settle; one more is a rule loop. */
export const MAX_SETTLE_RUNS = 64;

// ---------------------------------------------------------------------------------------
// Working state: a mutable, copy-on-write view of one step
// ---------------------------------------------------------------------------------------

interface Work {
  clock: number;
  latches: Record<string, boolean>;
  counters: Record<string, number>;
  selectors: Record<string, string>;
  wanted: Record<string, Aspect>;
  held: string[];
  quiet: Record<string, number>;
  faulted: EngineState["faulted"];
  points: Record<string, PointsLie>;
  thrown: Record<string, PointsPosition>;
  ownLatches: boolean;
  ownCounters: boolean;
  ownSelectors: boolean;
  ownWanted: boolean;
  ownQuiet: boolean;
  changes: Change[];
  /** Who is acting now: a rule id, or undefined when a command is. */
  rule: string | undefined;
  command: string | undefined;
  commandDetail: string | undefined;
}

function startWork(state: EngineState): Work {
  return {
    clock: state.clock,
    latches: state.latches,
    counters: state.counters,
    selectors: state.selectors,
    wanted: state.wanted,
    held: state.held,
    quiet: state.quiet,
    faulted: state.faulted,
    // Older saved states (before rulebook /2) have no points fields.
    points: state.points ?? NO_POINTS,
    thrown: state.thrown ?? NO_THROWS,
    ownLatches: false,
    ownCounters: false,
    ownSelectors: false,
    ownWanted: false,
    ownQuiet: false,
    changes: [],
    rule: undefined,
    command: undefined,
    commandDetail: undefined,
  };
}

function finishWork(work: Work): EngineState {
  return {
    clock: work.clock,
    latches: work.latches,
    counters: work.counters,
    selectors: work.selectors,
    wanted: work.wanted,
    held: work.held,
    quiet: work.quiet,
    faulted: work.faulted,
    points: work.points,
    thrown: work.thrown,
  };
}

const NO_POINTS: Record<string, PointsLie> = Object.freeze({}) as Record<string, PointsLie>;
const NO_THROWS: Record<string, PointsPosition> = Object.freeze({}) as Record<string, PointsPosition>;

function emit<K extends ChangeKind>(work: Work, kind: K, name: string, from: ChangeOf<K>["from"], to: ChangeOf<K>["to"], detail?: string): void {
  // Built the same way for every kind; the parameters tie `from` and `to` to the kind.
  const change = (
    work.rule !== undefined
      ? { kind, name, from, to, rule: work.rule }
      : work.command !== undefined
        ? { kind, name, from, to, command: work.command }
        : { kind, name, from, to }
  ) as Change;
  const text = detail ?? (work.rule === undefined ? work.commandDetail : undefined);
  if (text !== undefined) change.detail = text;
  work.changes.push(change);
}

function isHeld(work: Work, signal: string): boolean {
  return work.held.length > 0 && work.held.includes(signal);
}

function writeLatch(work: Work, latch: string, value: boolean): void {
  const from = work.latches[latch] === true;
  if (from === value) return;
  if (!work.ownLatches) {
    work.latches = { ...work.latches };
    work.ownLatches = true;
  }
  work.latches[latch] = value;
  emit(work, "latch", latch, from, value);
}

function writeCounter(work: Work, counter: string, value: number): void {
  const from = work.counters[counter] ?? 0;
  let to = value;
  if (to < 0) {
    emit(work, "alarm", counter, null, ENGINE_ALARM.countUnderflow, `counter ${counter} would go below 0 (${to}); held at 0`);
    to = 0;
  }
  if (to === from) return;
  if (!work.ownCounters) {
    work.counters = { ...work.counters };
    work.ownCounters = true;
  }
  work.counters[counter] = to;
  emit(work, "counter", counter, from, to);
}

function writeSelector(work: Work, selector: string, value: string): void {
  const from = work.selectors[selector];
  if (from === value) return;
  if (!work.ownSelectors) {
    work.selectors = { ...work.selectors };
    work.ownSelectors = true;
  }
  work.selectors[selector] = value;
  emit(work, "selector", selector, from, value);
}

function writeWanted(work: Work, signal: string, aspect: Aspect, reportShown = true): void {
  const from = work.wanted[signal] ?? "danger";
  if (from === aspect) return;
  if (!work.ownWanted) {
    work.wanted = { ...work.wanted };
    work.ownWanted = true;
  }
  work.wanted[signal] = aspect;
  emit(work, "wanted", signal, from, aspect);
  if (reportShown && work.faulted === null && !isHeld(work, signal)) emit(work, "shown", signal, from, aspect);
}

function writePoints(work: Work, points: string, lies: PointsLie): void {
  const from = work.points[points] ?? "unknown";
  if (from === lies) return;
  work.points = { ...work.points, [points]: lies };
  emit(work, "points", points, from, lies);
}

function writeThrown(work: Work, points: string, to: PointsPosition): void {
  const from = work.thrown[points] ?? null;
  if (from === to) return;
  work.thrown = { ...work.thrown, [points]: to };
  emit(work, "throw", points, from, to);
}

function writeQuiet(work: Work, ruleId: string, deadline: number | null): void {
  const from = work.quiet[ruleId];
  if (deadline === null ? from === undefined : from === deadline) return;
  const next = { ...work.quiet };
  if (deadline === null) delete next[ruleId];
  else next[ruleId] = deadline;
  work.quiet = next;
  work.ownQuiet = true;
  emit(work, "quiet", ruleId, from ?? null, deadline);
}

// ---------------------------------------------------------------------------------------
// Compilation
// ---------------------------------------------------------------------------------------

type Test = (work: Work) => boolean;
type Effect = (work: Work) => void;

interface CompiledRule {
  id: string;
  index: number;
  test: Test;
  effects: Effect[];
  /** Standing rules only: would running the actions change the state? */
  wouldChange: Test;
  quietMs: number;
}

/** A rulebook turned into closures and indices; see {@link compileRulebook}. */
export interface CompiledRulebook {
  rules: CompiledRule[];
  passRules: Map<string, CompiledRule[]>;
  movedRules: Map<string, CompiledRule[]>;
  quietRules: CompiledRule[];
  quietByDetector: Map<string, CompiledRule[]>;
  standing: CompiledRule[];
  signals: string[];
  /** Scratch for the rules selected by one pulse (never re-entered: step is synchronous). */
  selected: Uint8Array;
}

const ALWAYS: Test = () => true;

/** Turns a condition into a closure over the working state. */
function compileCondition(condition: Condition | undefined): Test {
  if (condition === undefined) return ALWAYS;
  return matchCondition<Test>(condition, {
    latch: ({ latch }) => (work) => work.latches[latch] === true,
    count: ({ count: counter, op, value }) => {
      switch (op) {
        case "==":
          return (work) => (work.counters[counter] ?? 0) === value;
        case "!=":
          return (work) => (work.counters[counter] ?? 0) !== value;
        case ">":
          return (work) => (work.counters[counter] ?? 0) > value;
        case ">=":
          return (work) => (work.counters[counter] ?? 0) >= value;
        case "<":
          return (work) => (work.counters[counter] ?? 0) < value;
        case "<=":
          return (work) => (work.counters[counter] ?? 0) <= value;
        default:
          return unreachable(op);
      }
    },
    selector: ({ selector, is: value }) => (work) => work.selectors[selector] === value,
    aspect: ({ aspect: signal, is: aspect }) => (work) => (work.wanted[signal] ?? "danger") === aspect,
    points: ({ points, lies }) => (work) => (work.points[points] ?? "unknown") === lies,
    not: (c) => {
      const inner = compileCondition(c.not);
      return (work) => !inner(work);
    },
    all: (c) => {
      const parts = c.all.map(compileCondition);
      if (parts.length === 1) return parts[0];
      if (parts.length === 2) {
        const [a, b] = parts;
        return (work) => a(work) && b(work);
      }
      if (parts.length === 3) {
        const [a, b, d] = parts;
        return (work) => a(work) && b(work) && d(work);
      }
      return (work) => {
        for (let i = 0; i < parts.length; i++) if (!parts[i](work)) return false;
        return true;
      };
    },
    any: (c) => {
      const parts = c.any.map(compileCondition);
      if (parts.length === 1) return parts[0];
      return (work) => {
        for (let i = 0; i < parts.length; i++) if (parts[i](work)) return true;
        return false;
      };
    },
  });
}

function compileAction(action: Action, ruleId: string): Effect {
  return matchAction<Effect>(action, {
    set: ({ set: latch }) => (work) => writeLatch(work, latch, true),
    clear: ({ clear: latch }) => (work) => writeLatch(work, latch, false),
    add: ({ add: counter, by }) => (work) => writeCounter(work, counter, (work.counters[counter] ?? 0) + by),
    zero: ({ zero: counter }) => (work) => writeCounter(work, counter, 0),
    select: ({ select: selector, value }) => (work) => writeSelector(work, selector, value),
    show: ({ show: signal, aspect }) => (work) => writeWanted(work, signal, aspect),
    throw: ({ throw: points, to }) => (work) => writeThrown(work, points, to),
    alarm: ({ alarm: text }) => (work) => emit(work, "alarm", ruleId, null, ENGINE_ALARM.ruleAlarm, text),
  });
}

/** Net effect of an action list, judged without running it (for settle). */
function compileWouldChange(actions: readonly Action[]): Test {
  const latchFinal = new Map<string, boolean>();
  const counterOps = new Map<string, { zero: boolean; by: number }[]>();
  const selectorFinal = new Map<string, string>();
  const wantedFinal = new Map<string, Aspect>();
  const thrownFinal = new Map<string, PointsPosition>();
  for (const action of actions) {
    matchAction<unknown>(action, {
      set: (a) => latchFinal.set(a.set, true),
      clear: (a) => latchFinal.set(a.clear, false),
      add: (a) => counterOps.set(a.add, [...(counterOps.get(a.add) ?? []), { zero: false, by: a.by }]),
      zero: (a) => counterOps.set(a.zero, [...(counterOps.get(a.zero) ?? []), { zero: true, by: 0 }]),
      select: (a) => selectorFinal.set(a.select, a.value),
      show: (a) => wantedFinal.set(a.show, a.aspect),
      throw: (a) => thrownFinal.set(a.throw, a.to),
      // An alarm changes no state (standing rules cannot have one).
      alarm: () => undefined,
    });
  }
  const checks: Test[] = [];
  for (const [latch, value] of latchFinal) checks.push((work) => (work.latches[latch] === true) !== value);
  for (const [counter, ops] of counterOps) {
    if (ops.length === 1 && !ops[0].zero) {
      const by = ops[0].by;
      if (by > 0) checks.push(() => true);
      else if (by < 0) checks.push((work) => (work.counters[counter] ?? 0) > 0);
      continue;
    }
    checks.push((work) => {
      const from = work.counters[counter] ?? 0;
      let value = from;
      for (const op of ops) value = op.zero ? 0 : Math.max(0, value + op.by);
      return value !== from;
    });
  }
  for (const [selector, value] of selectorFinal) checks.push((work) => work.selectors[selector] !== value);
  for (const [signal, aspect] of wantedFinal) checks.push((work) => (work.wanted[signal] ?? "danger") !== aspect);
  for (const [points, to] of thrownFinal) checks.push((work) => work.thrown[points] !== to);
  if (checks.length === 0) return () => false;
  if (checks.length === 1) return checks[0];
  if (checks.length === 2) {
    const [a, b] = checks;
    return (work) => a(work) || b(work);
  }
  return (work) => {
    for (let i = 0; i < checks.length; i++) if (checks[i](work)) return true;
    return false;
  };
}

function mentionedSignals(rulebook: Rulebook): string[] {
  return [...signalsMentioned(rulebook, { includeProving: true })];
}

const compiledCache = new WeakMap<Rulebook, CompiledRulebook>();

/**
 * Compiles a rulebook (once per object; later calls return the cached form). `step` calls
 * this itself; call it ahead of time only to move the cost out of a timed loop.
 */
export function compileRulebook(rulebook: Rulebook): CompiledRulebook {
  const cached = compiledCache.get(rulebook);
  if (cached) return cached;
  const rules: CompiledRule[] = rulebook.rules.map((rule: Rule, index) => ({
    id: rule.id,
    index,
    test: compileCondition(rule.if),
    effects: rule.do.map((action) => compileAction(action, rule.id)),
    wouldChange: rule.on === "standing" ? compileWouldChange(rule.do) : ALWAYS,
    quietMs: rule.on !== "standing" && "quiet" in rule.on ? rule.on.ms : 0,
  }));
  const passRules = new Map<string, CompiledRule[]>();
  const movedRules = new Map<string, CompiledRule[]>();
  const quietByDetector = new Map<string, CompiledRule[]>();
  const quietRules: CompiledRule[] = [];
  const standing: CompiledRule[] = [];
  let widest = 0;
  const addTo = (map: Map<string, CompiledRule[]>, key: string, rule: CompiledRule): number => {
    const list = map.get(key) ?? [];
    list.push(rule);
    map.set(key, list);
    return list.length;
  };
  rulebook.rules.forEach((rule, index) => {
    const compiled = rules[index];
    matchTrigger<unknown>(rule.on, {
      standing: () => standing.push(compiled),
      pass: (t) => (widest = Math.max(widest, addTo(passRules, t.pass, compiled))),
      moved: (t) => (widest = Math.max(widest, addTo(movedRules, t.moved, compiled))),
      quiet: (t) => {
        quietRules.push(compiled);
        addTo(quietByDetector, t.quiet, compiled);
      },
    });
  });
  const compiled: CompiledRulebook = {
    rules,
    passRules,
    movedRules,
    quietRules,
    quietByDetector,
    standing,
    signals: mentionedSignals(rulebook),
    selected: new Uint8Array(widest),
  };
  compiledCache.set(rulebook, compiled);
  return compiled;
}

// ---------------------------------------------------------------------------------------
// Running
// ---------------------------------------------------------------------------------------

function runRule(work: Work, rule: CompiledRule): void {
  work.rule = rule.id;
  const effects = rule.effects;
  for (let i = 0; i < effects.length; i++) effects[i](work);
}

function fault(compiled: CompiledRulebook, work: Work, rule: CompiledRule): void {
  const reason = `rule loop: more than ${MAX_SETTLE_RUNS} standing rule runs in one settle (next was "${rule.id}")`;
  work.rule = rule.id;
  for (const signal of compiled.signals) {
    const shown = isHeld(work, signal) ? "danger" : (work.wanted[signal] ?? "danger");
    if (shown !== "danger") emit(work, "shown", signal, shown, "danger");
  }
  work.faulted = { reason, at: work.clock };
  emit(work, "fault", "rulebook", null, work.faulted, reason);
  emit(work, "alarm", "rulebook", null, ENGINE_ALARM.ruleLoop, `${reason}; every signal shows danger until restart`);
}

function settle(compiled: CompiledRulebook, work: Work): void {
  if (work.faulted !== null) return;
  const standing = compiled.standing;
  let runs = 0;
  search: for (;;) {
    for (let i = 0; i < standing.length; i++) {
      const rule = standing[i];
      if (rule.test(work) && rule.wouldChange(work)) {
        if (++runs > MAX_SETTLE_RUNS) {
          fault(compiled, work, rule);
          return;
        }
        runRule(work, rule);
        continue search;
      }
    }
    return;
  }
}

function fireDueQuiet(compiled: CompiledRulebook, work: Work): void {
  const quietRules = compiled.quietRules;
  if (quietRules.length === 0) return;
  while (work.faulted === null) {
    let due: CompiledRule | undefined;
    let dueAt = Number.POSITIVE_INFINITY;
    for (let i = 0; i < quietRules.length; i++) {
      const deadline = work.quiet[quietRules[i].id];
      if (deadline !== undefined && deadline <= work.clock && deadline < dueAt) {
        due = quietRules[i];
        dueAt = deadline;
      }
    }
    if (due === undefined) return;
    work.rule = due.id;
    writeQuiet(work, due.id, null);
    if (due.test(work)) runRule(work, due);
    settle(compiled, work);
  }
}

/**
 * Selects `rules` on the state as it is now, then (after `record`, if any) runs the selected
 * ones in rule order: an earlier rule must not change whether a later one was selected.
 */
function selectThenRun(compiled: CompiledRulebook, work: Work, rules: CompiledRule[] | undefined, record?: () => void): void {
  if (rules === undefined) {
    record?.();
    return;
  }
  if (rules.length === 1 && record === undefined) {
    if (rules[0].test(work)) runRule(work, rules[0]);
    return;
  }
  const selected = compiled.selected;
  for (let i = 0; i < rules.length; i++) selected[i] = rules[i].test(work) ? 1 : 0;
  record?.();
  for (let i = 0; i < rules.length; i++) if (selected[i] === 1) runRule(work, rules[i]);
}

/**
 * A points report (§4 step 2): `moved` rules are selected only when the points now lie
 * otherwise than last reported, on the state before the report; the new position is recorded
 * after the selection, then the selected rules run.
 */
function pointsReport(compiled: CompiledRulebook, work: Work, points: string, lies: PointsLie): void {
  if ((work.points[points] ?? "unknown") === lies) return;
  work.rule = undefined;
  selectThenRun(compiled, work, compiled.movedRules.get(points), () => {
    const rule = work.rule;
    work.rule = undefined;
    writePoints(work, points, lies);
    work.rule = rule;
  });
}

function pulse(compiled: CompiledRulebook, work: Work, detector: string, at: number): void {
  selectThenRun(compiled, work, compiled.passRules.get(detector));
  const quiet = compiled.quietByDetector.get(detector);
  if (quiet !== undefined) {
    for (const rule of quiet) {
      work.rule = rule.id;
      writeQuiet(work, rule.id, at + rule.quietMs);
    }
  }
}

function resetToInitial(rulebook: Rulebook, compiled: CompiledRulebook, work: Work): void {
  for (const [latch, value] of Object.entries(rulebook.latches)) writeLatch(work, latch, value);
  for (const [counter, value] of Object.entries(rulebook.counters)) writeCounter(work, counter, value);
  for (const [selector, declared] of Object.entries(rulebook.selectors)) writeSelector(work, selector, declared.initial);
  const wasFaulted = work.faulted !== null;
  if (wasFaulted) {
    emit(work, "fault", "rulebook", work.faulted, null);
    work.faulted = null;
  }
  for (const signal of compiled.signals) {
    const held = isHeld(work, signal);
    const before = wasFaulted || held ? "danger" : (work.wanted[signal] ?? "danger");
    const wanted = rulebook.initial[signal] ?? "danger";
    writeWanted(work, signal, wanted, false);
    const after = held ? "danger" : wanted;
    if (before !== after) emit(work, "shown", signal, before, after);
  }
  for (const ruleId of Object.keys(work.quiet)) writeQuiet(work, ruleId, null);
}

function command(rulebook: Rulebook, compiled: CompiledRulebook, work: Work, input: Extract<EngineInput, { type: "command" }>): void {
  work.command = input.command;
  work.commandDetail = input.reason;
  switch (input.command) {
    case "hold":
    case "release": {
      const signal = input.signal;
      if (!compiled.signals.includes(signal)) return;
      const held = work.held.includes(signal);
      const hold = input.command === "hold";
      if (held === hold) return;
      const wanted = work.wanted[signal] ?? "danger";
      work.held = hold ? [...work.held, signal].sort() : work.held.filter((id) => id !== signal);
      emit(work, "held", signal, held, hold);
      if (work.faulted === null && wanted !== "danger") {
        emit(work, "shown", signal, hold ? wanted : "danger", hold ? "danger" : wanted);
      }
      break;
    }
    case "set":
    case "clear":
      if (!(input.latch in rulebook.latches)) return;
      writeLatch(work, input.latch, input.command === "set");
      break;
    case "zero":
      if (!(input.counter in rulebook.counters)) return;
      writeCounter(work, input.counter, 0);
      break;
    case "restart":
      resetToInitial(rulebook, compiled, work);
      break;
    default:
      return;
  }
  settle(compiled, work);
}

/**
 * Applies one input to a state (CONTRACT.md §4): advance the clock, fire due quiet
 * triggers, apply the pulse or command, settle.
 *
 * @example
 * let state = initialState(rulebook, 0);
 * const { state: next, changes } = step(rulebook, state, { type: "pulse", detector: "MA", at: 1200 });
 */
export function step(rulebook: Rulebook, state: EngineState, input: EngineInput): StepResult {
  const compiled = compileRulebook(rulebook);
  const work = startWork(state);
  if (input.at > work.clock) work.clock = input.at;
  if (work.faulted === null) fireDueQuiet(compiled, work);
  work.rule = undefined;
  if (input.type === "command") {
    command(rulebook, compiled, work, input);
  } else if (input.type === "points" && work.faulted !== null) {
    // Where the points lie is a fact worth keeping even while no rules run.
    writePoints(work, input.points, input.lies);
  } else if (work.faulted === null) {
    if (input.type === "pulse") pulse(compiled, work, input.detector, input.at);
    else if (input.type === "points") pointsReport(compiled, work, input.points, input.lies);
    settle(compiled, work);
  }
  return { state: finishWork(work), changes: work.changes };
}

/** The starting state and the changes its first settle made (e.g. for a session log). */
export function initialStep(rulebook: Rulebook, at = 0): StepResult {
  const compiled = compileRulebook(rulebook);
  const wanted: Record<string, Aspect> = {};
  for (const signal of compiled.signals) wanted[signal] = rulebook.initial[signal] ?? "danger";
  const selectors: Record<string, string> = {};
  for (const [name, selector] of Object.entries(rulebook.selectors)) selectors[name] = selector.initial;
  const start: EngineState = {
    clock: at,
    latches: { ...rulebook.latches },
    counters: { ...rulebook.counters },
    selectors,
    wanted,
    held: [],
    quiet: {},
    faulted: null,
    points: {},
    thrown: {},
  };
  const work = startWork(start);
  // The start objects are fresh, so the first settle may write to them in place.
  work.ownLatches = work.ownCounters = work.ownSelectors = work.ownWanted = true;
  settle(compiled, work);
  return { state: finishWork(work), changes: work.changes };
}

/** Declared initial values, then settle (CONTRACT.md §4 "Start"). */
export function initialState(rulebook: Rulebook, at = 0): EngineState {
  return initialStep(rulebook, at).state;
}

/** The aspect each signal shows: danger when faulted or held, otherwise the wanted aspect. */
export function shownAspects(rulebook: Rulebook, state: EngineState): Record<string, Aspect> {
  const shown: Record<string, Aspect> = {};
  for (const signal of compileRulebook(rulebook).signals) {
    shown[signal] = state.faulted !== null || state.held.includes(signal) ? "danger" : (state.wanted[signal] ?? "danger");
  }
  return shown;
}

/** Every signal the rulebook knows (see the module notes for the order). */
export function signalIds(rulebook: Rulebook): string[] {
  return [...compileRulebook(rulebook).signals];
}

/** Runs a list of inputs from a state; the same as calling {@link step} for each in turn. */
export function replay(
  rulebook: Rulebook,
  state: EngineState,
  inputs: Iterable<EngineInput>,
): { state: EngineState; changes: Change[] } {
  let current = state;
  const changes: Change[] = [];
  for (const input of inputs) {
    const result = step(rulebook, current, input);
    current = result.state;
    for (const change of result.changes) changes.push(change);
  }
  return { state: current, changes };
}
