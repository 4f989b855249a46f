/**
 * Translates a rulebook and the proving environment of CONTRACT.md §5 into Promela, so that
 * an independent model checker (SPIN 6.5.2, Debian package `spin`) can check the safety
 * properties the prover checks: `no-conflicting-proceeds`, `one-train-per-section`,
 * `no-underflow`, `settles`, and for routes that name points `points-set-for-train` and
 * `points-locked` — with the points environment of §5 (facing groups, the route fixed at entry
 * by where the points lie, power points moving after a throw, hand points moving while no train
 * is on them, each modelled points reported `normal` once at the start).
 *
 * The translation is written from the rulebook semantics of §4 directly — it does not call the
 * engine — so an agreement between SPIN and `prove` is evidence about both. It uses the same
 * abstraction as `prove.ts` (docs/prover.md): the clock is left out, any armed quiet trigger
 * may fire at any moment, train positions are per-axle detector counts.
 *
 * Each property is an assertion whose expression starts with the property's name (with `_` for
 * `-`), so pan's "assertion violated (no_underflow&&…)" lines say which property failed. Run pan
 * with `-c0 -e` to have it report every violated assertion rather than stop at the first.
 *
 * Pure: produces text; running SPIN is the caller's business (see `parsePanOutput`).
 *
 * @example
 * const pml = toPromela(rulebook);
 * // spin -a model.pml && gcc -DSAFETY -o pan pan.c && ./pan -c0 -e -E
 */
import { matchAction, matchCondition } from "./kinds";
import { pointsMentioned, signalsMentioned } from "./mentions";
import { emitMoves, emitTrainAsserts, emitTrainDeclarations, type EnvironmentContext, type ModelledPoints } from "./promelaEnvironment";
import { RULEBOOK_FORMAT_2, type Action, type Condition, type Rulebook } from "./schema";

export const SPIN_PROPERTIES = [
  "no-conflicting-proceeds",
  "one-train-per-section",
  "no-underflow",
  "settles",
  "points-set-for-train",
  "points-locked",
] as const;
export type SpinProperty = (typeof SPIN_PROPERTIES)[number];

/** Settle may run this many standing rules; one more is a rule loop (§4 step 3). */
const MAX_SETTLE_RUNS = 64;

const ASPECT_CODE = { danger: 0, caution: 1, clear: 2 } as const;
/** Codes of where points lie (`unknown` = never reported) and where they were thrown (0 = never). */
const LIE_CODE = { unknown: 0, normal: 1, reverse: 2, moving: 3 } as const;

const label = (p: SpinProperty): string => p.replace(/-/g, "_");

/**
 * The Promela model of `rulebook` with the §5 environment.
 *
 * Layout of the model: globals for latches (`l_i`), counters (`c_i`), selectors (`s_i`, the
 * index of the value), wanted aspects (`w_i`: 0 danger, 1 caution, 2 clear), armed quiet
 * triggers (`q_i`), the fault marker, where each points lie as last reported (`pl_i`) and where
 * last thrown (`pt_i`), and per facing group (routes with one signal, approach and entry; a
 * plain route is a group of one) `n_g` trains in slots `ax_g[]` (axles), `rt_g[]` (route: 0
 * until fixed at entry, else 1 + its place in the group) and `pos_g[]` (detectors crossed by
 * each axle, slot-major). `init` starts the rulebook and then loops over every environment
 * move, each one `atomic`: the move's nondeterministic choice, then one `d_step` running the
 * engine and the property asserts.
 */
export function toPromela(rulebook: Rulebook, options: PromelaOptions = {}): string {
  const out: string[] = [];
  const main = emitModel(rulebook, "", out, options);
  out.push(`init {`, ...main, `}`);
  return out.join("\n") + "\n";
}

/**
 * Several rulebooks in one Promela model, so one compilation of pan checks them all: every
 * name of rulebook i is prefixed `r<i>_`, and `init` chooses one rulebook nondeterministically.
 * Read the verdicts per rulebook with `parsePanOutput(text).byModel`.
 */
export function toPromelaBatch(rulebooks: Rulebook[], options: PromelaOptions[] = []): string {
  const out: string[] = [];
  const mains = rulebooks.map((rulebook, i) => emitModel(rulebook, `r${i}_`, out, options[i] ?? {}));
  out.push(`init {`, `  if`, ...mains.flatMap(([first, ...rest]) => [`  :: ${first.trim()}`, ...rest]), `  fi`, `}`);
  return out.join("\n") + "\n";
}

export interface PromelaOptions {
  /**
   * How each points is worked (the layout's records). Absent, as the prover does: points some
   * `throw` commands are power-worked, the rest are worked by hand.
   */
  points?: Record<string, "power" | "hand">;
}

/** Keeps user text (rule ids, names) from ending a Promela comment early. */
const commentSafe = (text: string): string => text.replace(/\*\//g, "* /").replace(/[\r\n]/g, " ");

/**
 * Emits the declarations and inlines of `rulebook`'s model into `out` and returns the body of its
 * main process (the start, then the loop of moves). The body goes straight into `init`, not into
 * an inline: SPIN limits an inline's text (64 KB), which the moves of 8-axle trains exceed.
 */
function emitModel(rulebook: Rulebook, P: string, out: string[], options: PromelaOptions): string[] {
  const proving = rulebook.proving;
  if (!proving) throw new Error("the rulebook has no proving section");
  const maxAxles = proving.maxAxles ?? 2;
  const maxTrains = proving.maxTrainsPerRoute ?? 2;

  const latchNames = Object.keys(rulebook.latches);
  const counterNames = Object.keys(rulebook.counters);
  const selectorNames = Object.keys(rulebook.selectors);
  const signalNames: string[] = [];
  const addSignal = (s: string): void => {
    if (!signalNames.includes(s)) signalNames.push(s);
  };
  Object.keys(rulebook.initial).forEach(addSignal);
  proving.routes.forEach((r) => addSignal(r.signal));
  signalsMentioned(rulebook, { includeProving: false }).forEach(addSignal);
  const mentions = pointsMentioned(rulebook);
  const pointsNames = mentions.all;
  const quietRules = rulebook.rules.filter((r) => typeof r.on === "object" && "quiet" in r.on);
  const movedRules = rulebook.rules.filter((r) => typeof r.on === "object" && "moved" in r.on);

  const latch = (n: string): string => `${P}l_${latchNames.indexOf(n)}`;
  const counter = (n: string): string => `${P}c_${counterNames.indexOf(n)}`;
  const selector = (n: string): string => `${P}s_${selectorNames.indexOf(n)}`;
  const wanted = (n: string): string => `${P}w_${signalNames.indexOf(n)}`;
  const quiet = (ruleId: string): string => `${P}q_${quietRules.findIndex((r) => r.id === ruleId)}`;
  const comparison = (op: string): string => (op === "==" ? "==" : op === "!=" ? "!=" : op);

  /** Where points lie as last reported (`pl_i`) and where last thrown (`pt_i`, 0 = never). */
  const pointsLie = (n: string): string => `${P}pl_${pointsNames.indexOf(n)}`;
  const pointsThrown = (n: string): string => `${P}pt_${pointsNames.indexOf(n)}`;
  // The points model applies when the rulebook is /2 or a route names points (§5); then every
  // points the rulebook or its routes mention is modelled.
  const routePoints = proving.routes.some((r) => Object.keys(r.points ?? {}).length > 0);
  const modelled: ModelledPoints[] =
    rulebook.format === RULEBOOK_FORMAT_2 || routePoints
      ? pointsNames.map((name) => ({
          name,
          worked: options.points?.[name] ?? (mentions.thrown.has(name) ? "power" : "hand"),
          lie: pointsLie(name),
          thrown: pointsThrown(name),
        }))
      : [];

  // Inputs: each detector's pulse, then each quiet rule's firing, then each points reported
  // normal (1), reverse (2) or moving (3); NO_INPUT for an arrival.
  const detectors: string[] = [];
  proving.routes.forEach((r) => [...r.approach, r.entry, ...r.exit].forEach((d) => detectors.includes(d) || detectors.push(d)));
  const quietBase = detectors.length;
  const pointsInput = (p: number, code: number): number => quietBase + quietRules.length + 3 * p + code - 1;
  const NO_INPUT = 255;

  let sink = out;
  const emit = (line = ""): void => {
    sink.push(line);
  };
  const shownProceed = (signal: string): string => `(!${P}faulted && ${wanted(signal)} != 0)`;
  const assertOnce = (p: SpinProperty, ok: string): void => {
    const seen = `${P}seen_${label(p)}`;
    emit(`  if :: (!(${ok}) && !${seen}) -> ${seen} = 1; assert(${P}${label(p)} && (${ok})) :: else -> skip fi;`);
  };
  const ctx: EnvironmentContext = {
    P,
    emit,
    proving,
    maxAxles,
    maxTrains,
    shownProceed,
    detectorInput: (d) => detectors.indexOf(d),
    quietRuleIds: quietRules.map((r) => r.id),
    quietBase,
    quietArmed: quiet,
    points: modelled,
    pointsInput,
    noInput: NO_INPUT,
    assertOnce,
    commentSafe,
  };

  const cond = (c: Condition | undefined): string => {
    if (!c) return "1";
    return matchCondition(c, {
      latch: (c) => latch(c.latch),
      count: (c) => `(${counter(c.count)} ${comparison(c.op)} ${c.value})`,
      selector: (c) => {
        const i = rulebook.selectors[c.selector]?.values.indexOf(c.is) ?? -1;
        return i < 0 ? "0" : `(${selector(c.selector)} == ${i})`;
      },
      aspect: (c) => `(${wanted(c.aspect)} == ${ASPECT_CODE[c.is]})`,
      points: (c) => `(${pointsLie(c.points)} == ${LIE_CODE[c.lies]})`,
      not: (c) => `!(${cond(c.not)})`,
      all: (c) => (c.all.length ? `(${c.all.map(cond).join(" && ")})` : "1"),
      any: (c) => (c.any.length ? `(${c.any.map(cond).join(" || ")})` : "0"),
    });
  };

  const action = (a: Action): string =>
    matchAction(a, {
      set: (a) => `${latch(a.set)} = 1`,
      clear: (a) => `${latch(a.clear)} = 0`,
      add: (a) => {
        const c = counter(a.add);
        if (a.by >= 0) return `${c} = ${c} + ${a.by}`;
        // §4 step 4: an add that would go below zero sets 0 and raises the underflow alarm.
        return `if :: (${c} + ${a.by} < 0) -> ${c} = 0; ${P}uf = 1 :: else -> ${c} = ${c} + ${a.by} fi`;
      },
      zero: (a) => `${counter(a.zero)} = 0`,
      select: (a) => `${selector(a.select)} = ${rulebook.selectors[a.select].values.indexOf(a.value)}`,
      show: (a) => `${wanted(a.show)} = ${ASPECT_CODE[a.aspect]}`,
      throw: (a) => `${pointsThrown(a.throw)} = ${LIE_CODE[a.to]}`,
      alarm: () => "skip /* alarm: no state change */",
    });
  /** The state variables an action writes (to judge "would change the state" in settle). */
  const writes = (a: Action): string[] =>
    matchAction(a, {
      set: (a) => [latch(a.set)],
      clear: (a) => [latch(a.clear)],
      add: (a) => [counter(a.add)],
      zero: (a) => [counter(a.zero)],
      select: (a) => [selector(a.select)],
      show: (a) => [wanted(a.show)],
      throw: (a) => [pointsThrown(a.throw)],
      alarm: () => [],
    });
  const actions = (list: Action[]): string => (list.length ? list.map(action).join("; ") : "skip");

  const stateVars = [
    ...latchNames.map(latch),
    ...counterNames.map(counter),
    ...selectorNames.map(selector),
    ...signalNames.map(wanted),
    ...pointsNames.map(pointsThrown),
  ];

  emit(`/* Blocklight rulebook model, generated by shared/rulebook/promela.ts (see docs/prover.md). */`);
  emit(`/* Property labels: a constant 1 named after the property, first in each assert. */`);
  for (const p of SPIN_PROPERTIES) emit(`hidden byte ${P}${label(p)} = 1; hidden byte ${P}seen_${label(p)};`);
  emit();
  latchNames.forEach((n) => emit(`bool ${latch(n)} = ${rulebook.latches[n] ? 1 : 0}; /* latch ${commentSafe(n)} */`));
  counterNames.forEach((n) => emit(`int ${counter(n)} = ${rulebook.counters[n]}; /* counter ${commentSafe(n)} */`));
  selectorNames.forEach((n) => {
    const s = rulebook.selectors[n];
    emit(`byte ${selector(n)} = ${Math.max(0, s.values.indexOf(s.initial))}; /* selector ${commentSafe(n)}: ${commentSafe(s.values.join(", "))} */`);
  });
  signalNames.forEach((n) =>
    emit(`byte ${wanted(n)} = ${ASPECT_CODE[rulebook.initial[n] ?? "danger"]}; /* wanted aspect of signal ${commentSafe(n)} */`),
  );
  quietRules.forEach((r) => emit(`bool ${quiet(r.id)}; /* quiet trigger of rule ${commentSafe(r.id)} armed */`));
  emit(`bool ${P}faulted;`);
  modelled.forEach((pt) => {
    emit(`byte ${pt.lie}; /* points ${commentSafe(pt.name)} (${pt.worked}-worked): where last reported, 0 unknown, 1 normal, 2 reverse, 3 moving */`);
    emit(`byte ${pt.thrown}; /* points ${commentSafe(pt.name)}: where last thrown, 0 never */`);
  });
  emitTrainDeclarations(ctx);
  emit();
  emit(`/* Scratch space, not part of the state. */`);
  emit(`hidden byte ${P}uf; hidden byte ${P}uf_before; hidden byte ${P}found; hidden byte ${P}runs; hidden byte ${P}inp;`);
  const passRules = rulebook.rules.filter((r) => typeof r.on === "object" && "pass" in r.on);
  passRules.forEach((_, i) => emit(`hidden byte ${P}sel_${i};`));
  movedRules.forEach((_, i) => emit(`hidden byte ${P}msel_${i};`));
  stateVars.forEach((v) => emit(`hidden int ${P}old_${v};`));
  emit();

  // Settle: the first standing rule (in rule order) whose condition holds and whose actions
  // change the state runs; more than MAX_SETTLE_RUNS runs is a rule loop.
  const standing = rulebook.rules.filter((r) => r.on === "standing");
  emit(`inline ${P}settle() {`);
  emit(`  ${P}runs = 0;`);
  emit(`  do`);
  emit(`  :: ${P}faulted -> break`);
  emit(`  :: else ->`);
  emit(`    ${P}found = 0;`);
  for (const rule of standing) {
    emit(`    /* standing rule ${commentSafe(rule.id)} */`);
    emit(`    if`);
    emit(`    :: (!${P}found && ${cond(rule.if)}) ->`);
    // Only what the actions write can change: snapshot just that (keeps pan.c small).
    const written = [
      ...new Set(
        rule.do.flatMap(writes),
      ),
    ];
    emit(`      ${written.map((v) => `${P}old_${v} = ${v}`).join("; ") || "skip"};`);
    emit(`      ${P}uf_before = ${P}uf;`);
    emit(`      ${actions(rule.do)};`);
    const same = written.map((v) => `${P}old_${v} == ${v}`).join(" && ") || "1";
    // A 65th run does not happen: the state after 64 runs is kept and the rulebook faults.
    const restore = written.map((v) => `${v} = ${P}old_${v}`).join("; ") || "skip";
    emit(`      if`);
    emit(`      :: (${same}) -> ${P}uf = ${P}uf_before`);
    emit(`      :: else -> ${P}found = 1;`);
    emit(`         if :: (${P}runs == ${MAX_SETTLE_RUNS}) -> ${restore}; ${P}uf = ${P}uf_before; ${P}faulted = 1 :: else -> ${P}runs++ fi`);
    emit(`      fi`);
    emit(`    :: else -> skip`);
    emit(`    fi;`);
  }
  emit(`    if`);
  emit(`    :: ${P}found -> skip`);
  emit(`    :: else -> break`);
  emit(`    fi`);
  emit(`  od`);
  emit(`}`);
  emit();

  // Pulses: rules selected on the state before the pulse, then run in rule order; quiet
  // triggers of the detector (re)armed. A faulted rulebook runs no rules.
  detectors.forEach((d, di) => {
    emit(`inline ${P}pulse_${di}() { /* detector ${d} */`);
    emit(`  if`);
    emit(`  :: !${P}faulted ->`);
    const mine = passRules.map((r, i) => ({ r, i })).filter(({ r }) => (r.on as { pass: string }).pass === d);
    for (const { r, i } of mine) emit(`    ${P}sel_${i} = ${cond(r.if)}; /* rule ${commentSafe(r.id)} */`);
    for (const { r, i } of mine) emit(`    if :: ${P}sel_${i} -> ${actions(r.do)} :: else -> skip fi;`);
    for (const q of quietRules.filter((r) => (r.on as { quiet: string }).quiet === d)) emit(`    ${quiet(q.id)} = 1;`);
    // No settle here: engine_input settles after every input (one copy of settle per step).
    emit(`    skip`);
    emit(`  :: else -> skip`);
    emit(`  fi`);
    emit(`}`);
  });
  emit();

  // Points reports (§4 step 2, as for a pulse): `moved` rules are selected on the state before
  // the report, only when the points now lie otherwise; the position is recorded, then the
  // selected rules run. A faulted rulebook runs no rules but still records where points lie.
  modelled.forEach((pt, pi) => {
    for (const code of [1, 2, 3]) {
      emit(`inline ${P}report_${pi}_${code}() { /* points ${commentSafe(pt.name)} reported lying ${code} */`);
      emit(`  if`);
      emit(`  :: (!${P}faulted && ${pt.lie} != ${code}) ->`);
      const mine = movedRules.map((r, i) => ({ r, i })).filter(({ r }) => (r.on as { moved: string }).moved === pt.name);
      for (const { r, i } of mine) emit(`    ${P}msel_${i} = ${cond(r.if)}; /* rule ${commentSafe(r.id)} */`);
      emit(`    ${pt.lie} = ${code};`);
      for (const { r, i } of mine) emit(`    if :: ${P}msel_${i} -> ${actions(r.do)} :: else -> skip fi;`);
      emit(`    skip`);
      emit(`  :: else -> ${pt.lie} = ${code}`);
      emit(`  fi`);
      emit(`}`);
    }
  });
  emit();

  // The property asserts, after every move. Each is asserted once: after its first violation a
  // hidden marker stops further reports (pan -c0 would otherwise list every violating state).
  emit(`inline ${P}check() {`);
  assertOnce("settles", `!${P}faulted`);
  assertOnce("no-underflow", `!${P}uf`);
  emitTrainAsserts(ctx);
  emit(`  skip`);
  emit(`}`);
  emit();

  // Each move picks its input (`inp`: a detector's pulse, a quiet rule's firing, a points
  // report, or none for an arrival), updates the trains, then runs the one shared copy of the
  // engine step: this keeps pan.c small, so it compiles fast.
  emit(`inline ${P}engine_input() {`);
  emit(`  if`);
  emit(`  :: (${P}inp == ${NO_INPUT}) -> skip`);
  detectors.forEach((d, di) => emit(`  :: (${P}inp == ${di}) -> ${P}pulse_${di}() /* ${d} */`));
  quietRules.forEach((rule, qi) => {
    emit(`  :: (${P}inp == ${quietBase + qi}) -> /* quiet trigger of rule ${commentSafe(rule.id)} fires */`);
    emit(`     ${quiet(rule.id)} = 0;`);
    emit(`     if :: ${cond(rule.if)} -> ${actions(rule.do)} :: else -> skip fi`);
  });
  modelled.forEach((pt, pi) => {
    for (const code of [1, 2, 3]) emit(`  :: (${P}inp == ${pointsInput(pi, code)}) -> ${P}report_${pi}_${code}()`);
  });
  emit(`  fi;`);
  emit(`  ${P}settle()`);
  emit(`}`);
  emit();
  const endLabel = `${P}branch_ends`;
  const main: string[] = [];
  sink = main;
  // The start (§5): initial values, settle, then each modelled points reported normal once, in id order.
  const startReports = modelled.map((_, pi) => `${P}inp = ${pointsInput(pi, 1)}; ${P}engine_input(); `).join("");
  // (atomic, not d_step: it runs once, and a d_step holding several engine steps can exceed SPIN's size limit.)
  emit(`  atomic { ${P}uf = 0; ${P}inp = ${NO_INPUT}; ${P}engine_input(); ${startReports}${P}check() };`);
  emit(`  do`);
  emit(`  :: atomic {`);
  emit(`    if`);
  emitMoves(ctx, endLabel);
  emit(`    fi;`);
  // The engine step is deterministic: one d_step, so pan takes it as one transition (about a
  // tenth of the steps of a plain atomic sequence, and one level of the search stack per move).
  emit(`    d_step { ${P}uf = 0; ${P}engine_input(); ${P}check() }`);
  emit(`  }`);
  emit(`  od;`);
  emit(`${endLabel}: skip`);
  return main;
}

/** What pan reported: the error count, which properties failed, and whether the search was complete. */
export interface PanReport {
  errors: number;
  /** Violated properties of a single-rulebook model (`toPromela`). */
  violated: SpinProperty[];
  /** Violated properties of rulebook i of a batch (`toPromelaBatch`); absent = none. */
  byModel: Map<number, SpinProperty[]>;
  states: number;
  /** False when pan ran out of memory or depth or was interrupted, so "no errors" is not a proof. */
  complete: boolean;
}

/** Reads pan's output (run with `-c0`, so every violated assertion is listed). */
export function parsePanOutput(text: string): PanReport {
  const errors = Number(/errors:\s*(\d+)/.exec(text)?.[1] ?? NaN);
  const single = new Set<SpinProperty>();
  const byModel = new Map<number, Set<SpinProperty>>();
  for (const m of text.matchAll(/assertion violated \(\s*(?:r(\d+)_)?(\w+?)&&/g)) {
    const p = SPIN_PROPERTIES.find((id) => label(id) === m[2]);
    if (!p) continue;
    if (m[1] === undefined) single.add(p);
    else {
      const i = Number(m[1]);
      if (!byModel.has(i)) byModel.set(i, new Set());
      byModel.get(i)!.add(p);
    }
  }
  const states = Number(/(\d+(?:e\+\d+)?) states, stored/.exec(text)?.[1] ?? NaN);
  const complete =
    Number.isFinite(errors) && !/max search depth too small|out of memory|reached -DMEMLIM bound|aborted|interrupted|search not completed/i.test(text);
  const ordered = (set: Set<SpinProperty>): SpinProperty[] => SPIN_PROPERTIES.filter((p) => set.has(p));
  return {
    errors,
    violated: ordered(single),
    byModel: new Map([...byModel].map(([i, set]) => [i, ordered(set)])),
    states,
    complete,
  };
}
