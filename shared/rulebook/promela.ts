/**
 * Translates a rulebook and the proving environment of CONTRACT.md §5 into Promela, so that
 * an independent model checker (SPIN 6.5.2, Debian package `spin`) can check the safety
 * properties the prover checks: `no-conflicting-proceeds`, `one-train-per-section`,
 * `no-underflow` and `settles`.
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
import type { Action, Condition, Rulebook } from "./schema";

export const SPIN_PROPERTIES = [
  "no-conflicting-proceeds",
  "one-train-per-section",
  "no-underflow",
  "settles",
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
 * triggers (`q_i`), the fault marker, and per route `n_r` trains in slots `ax_r[]` (axles) and
 * `pos_r[]` (detectors crossed by each axle, slot-major). `init` starts the rulebook and then
 * loops over every environment move, each one `atomic` and followed by the property asserts.
 */
export function toPromela(rulebook: Rulebook): string {
  const out: string[] = [];
  emitModel(rulebook, "", out);
  out.push(`init { main() }`);
  return out.join("\n") + "\n";
}

/**
 * Several rulebooks in one Promela model, so one compilation of pan checks them all: every
 * name of rulebook i is prefixed `r<i>_`, and `init` chooses one rulebook nondeterministically.
 * Read the verdicts per rulebook with `parsePanOutput(text).byModel`.
 */
export function toPromelaBatch(rulebooks: Rulebook[]): string {
  const out: string[] = [];
  rulebooks.forEach((rulebook, i) => emitModel(rulebook, `r${i}_`, out));
  out.push(`init {`, `  if`, ...rulebooks.map((_, i) => `  :: r${i}_main()`), `  fi`, `}`);
  return out.join("\n") + "\n";
}

/** Keeps user text (rule ids, names) from ending a Promela comment early. */
const commentSafe = (text: string): string => text.replace(/\*\//g, "* /").replace(/[\r\n]/g, " ");

function emitModel(rulebook: Rulebook, P: string, out: string[]): void {
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
  const pointsNames = pointsMentioned(rulebook).all;
  const quietRules = rulebook.rules.filter((r) => typeof r.on === "object" && "quiet" in r.on);

  const latch = (n: string): string => `${P}l_${latchNames.indexOf(n)}`;
  const counter = (n: string): string => `${P}c_${counterNames.indexOf(n)}`;
  const selector = (n: string): string => `${P}s_${selectorNames.indexOf(n)}`;
  const wanted = (n: string): string => `${P}w_${signalNames.indexOf(n)}`;
  const quiet = (ruleId: string): string => `${P}q_${quietRules.findIndex((r) => r.id === ruleId)}`;
  const comparison = (op: string): string => (op === "==" ? "==" : op === "!=" ? "!=" : op);

  /** Where points lie as last reported (`pl_i`) and where last thrown (`pt_i`, 0 = never). */
  const pointsLie = (n: string): string => `${P}pl_${pointsNames.indexOf(n)}`;
  const pointsThrown = (n: string): string => `${P}pt_${pointsNames.indexOf(n)}`;

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

  const emit = (line = ""): void => {
    out.push(line);
  };
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
  proving.routes.forEach((r, ri) => {
    emit(`byte ${P}n_${ri}; /* trains on route ${commentSafe(r.id)} */`);
    emit(`byte ${P}ax_${ri}[${maxTrains}]; /* axles of each train, front train first */`);
    emit(`byte ${P}pos_${ri}[${maxTrains * maxAxles}]; /* detectors crossed by each axle */`);
  });
  emit();
  emit(`/* Scratch space, not part of the state. */`);
  emit(`hidden byte ${P}uf; hidden byte ${P}uf_before; hidden byte ${P}found; hidden byte ${P}runs; hidden byte ${P}inp;`);
  const passRules = rulebook.rules.filter((r) => typeof r.on === "object" && "pass" in r.on);
  passRules.forEach((_, i) => emit(`hidden byte ${P}sel_${i};`));
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
  const detectors: string[] = [];
  proving.routes.forEach((r) => [...r.approach, r.entry, ...r.exit].forEach((d) => detectors.includes(d) || detectors.push(d)));
  detectors.forEach((d, di) => {
    emit(`inline ${P}pulse_${di}() { /* detector ${d} */`);
    emit(`  if`);
    emit(`  :: !${P}faulted ->`);
    const mine = passRules.map((r, i) => ({ r, i })).filter(({ r }) => (r.on as { pass: string }).pass === d);
    for (const { r, i } of mine) emit(`    ${P}sel_${i} = ${cond(r.if)}; /* rule ${commentSafe(r.id)} */`);
    for (const { r, i } of mine) emit(`    if :: ${P}sel_${i} -> ${actions(r.do)} :: else -> skip fi;`);
    for (const q of quietRules.filter((r) => (r.on as { quiet: string }).quiet === d)) emit(`    ${quiet(q.id)} = 1;`);
    emit(`    ${P}settle()`);
    emit(`  :: else -> skip`);
    emit(`  fi`);
    emit(`}`);
  });
  emit();

  // The property asserts, after every move.
  const shownProceed = (signal: string): string => `(!${P}faulted && ${wanted(signal)} != 0)`;
  const routeIndex = new Map(proving.routes.map((r, i) => [r.id, i]));
  const occupied = (ri: number): string => {
    const entry = proving.routes[ri].approach.length;
    const terms: string[] = [];
    for (let t = 0; t < maxTrains; t++) terms.push(`((${P}n_${ri} > ${t} && ${P}pos_${ri}[${t * maxAxles}] > ${entry}) -> 1 : 0)`);
    return `(${terms.join(" + ")})`;
  };
  // Each property is asserted once: after its first violation a hidden marker stops further
  // reports (pan -c0 would otherwise list every violating state).
  const assertOnce = (p: SpinProperty, ok: string): void => {
    const seen = `${P}seen_${label(p)}`;
    emit(`  if :: (!(${ok}) && !${seen}) -> ${seen} = 1; assert(${P}${label(p)} && (${ok})) :: else -> skip fi;`);
  };
  emit(`inline ${P}check() {`);
  assertOnce("settles", `!${P}faulted`);
  assertOnce("no-underflow", `!${P}uf`);
  for (const [a, b] of proving.conflicts ?? []) {
    const ra = proving.routes[routeIndex.get(a) ?? -1];
    const rb = proving.routes[routeIndex.get(b) ?? -1];
    if (!ra || !rb || ra === rb || ra.signal === rb.signal) continue;
    assertOnce("no-conflicting-proceeds", `!(${shownProceed(ra.signal)} && ${shownProceed(rb.signal)})`);
  }
  proving.routes.forEach((_, ri) => assertOnce("one-train-per-section", `${occupied(ri)} <= 1`));
  for (const [a, b] of proving.conflicts ?? []) {
    const ia = routeIndex.get(a) ?? -1;
    const ib = routeIndex.get(b) ?? -1;
    if (ia < 0 || ib < 0 || ia === ib) continue;
    assertOnce("one-train-per-section", `!(${occupied(ia)} > 0 && ${occupied(ib)} > 0)`);
  }
  emit(`  skip`);
  emit(`}`);
  emit();

  // Each move picks its input (`inp`: a detector's pulse, a quiet rule's firing, or none for an
  // arrival), updates the trains, then runs the one shared copy of the engine step: this keeps
  // pan.c small, so it compiles fast.
  const NO_INPUT = 255;
  emit(`inline ${P}engine_step() {`);
  emit(`  ${P}uf = 0;`);
  emit(`  if`);
  emit(`  :: (${P}inp == ${NO_INPUT}) -> skip`);
  detectors.forEach((d, di) => emit(`  :: (${P}inp == ${di}) -> ${P}pulse_${di}() /* ${d} */`));
  quietRules.forEach((rule, qi) => {
    emit(`  :: (${P}inp == ${detectors.length + qi}) -> /* quiet trigger of rule ${commentSafe(rule.id)} fires */`);
    emit(`     ${quiet(rule.id)} = 0;`);
    emit(`     if :: ${cond(rule.if)} -> ${actions(rule.do)} :: else -> skip fi`);
  });
  emit(`  fi;`);
  emit(`  ${P}settle()`);
  emit(`}`);
  emit();
  emit(`inline ${P}main() {`);
  emit(`  atomic { ${P}inp = ${NO_INPUT}; ${P}engine_step(); ${P}check() };`);
  emit(`  do`);
  emit(`  :: atomic {`);
  emit(`    if`);
  proving.routes.forEach((route, ri) => {
    const path = [...route.approach, route.entry, ...route.exit];
    const length = path.length;
    const entry = route.approach.length;
    emit(`    /* route ${commentSafe(route.id)}: a train arrives */`);
    emit(`    :: (${P}n_${ri} < ${maxTrains}) -> if ${Array.from({ length: maxAxles }, (_, a) => `:: ${P}ax_${ri}[${P}n_${ri}] = ${a + 1}`).join(" ")} fi; ${P}n_${ri}++; ${P}inp = ${NO_INPUT}`);
    for (let t = 0; t < maxTrains; t++) {
      for (let k = 0; k < maxAxles; k++) {
        const p = (axle: number): string => `${P}pos_${ri}[${t * maxAxles + axle}]`;
        const guards = [`${P}n_${ri} > ${t}`, `${P}ax_${ri}[${t}] > ${k}`, `${p(k)} < ${length}`];
        // the axle ahead has already crossed the detector
        if (k > 0) guards.push(`${p(k - 1)} > ${p(k)}`);
        // the axle behind has crossed the previous detector (it is level with this axle)
        if (k < maxAxles - 1) guards.push(`(${P}ax_${ri}[${t}] <= ${k + 1} || ${p(k + 1)} >= ${p(k)})`);
        // the train ahead has cleared the detector
        if (t > 0) guards.push(`${P}pos_${ri}[${(t - 1) * maxAxles} + ${P}ax_${ri}[${t - 1}] - 1] > ${p(k)}`);
        // the leading axle crosses entry only while the signal shows non-danger
        if (k === 0) guards.push(`(${p(k)} != ${entry} || ${shownProceed(route.signal)})`);
        emit(`    /* route ${commentSafe(route.id)}: axle ${k + 1} of train slot ${t + 1} crosses its next detector */`);
        emit(`    :: (${guards.join(" && ")}) ->`);
        emit(`       if`);
        path.forEach((d, i) => emit(`       :: (${p(k)} == ${i}) -> ${P}inp = ${detectors.indexOf(d)} /* ${d} */`));
        emit(`       fi;`);
        emit(`       ${p(k)}++;`);
        // The last axle crossing the last exit detector: the train leaves; later trains move up.
        const shift: string[] = [];
        for (let u = t; u < maxTrains - 1; u++) {
          shift.push(`${P}ax_${ri}[${u}] = ${P}ax_${ri}[${u + 1}]`);
          for (let a = 0; a < maxAxles; a++) shift.push(`${P}pos_${ri}[${u * maxAxles + a}] = ${P}pos_${ri}[${(u + 1) * maxAxles + a}]`);
        }
        shift.push(`${P}ax_${ri}[${maxTrains - 1}] = 0`);
        for (let a = 0; a < maxAxles; a++) shift.push(`${P}pos_${ri}[${(maxTrains - 1) * maxAxles + a}] = 0`);
        shift.push(`${P}n_${ri}--`);
        emit(`       if :: (${P}ax_${ri}[${t}] == ${k + 1} && ${p(k)} == ${length}) -> ${shift.join("; ")} :: else -> skip fi`);
      }
    }
  });
  quietRules.forEach((rule, qi) => {
    // A faulted rulebook fires no quiet triggers (they stay armed, as in the engine).
    emit(`    /* the quiet trigger of rule ${commentSafe(rule.id)} fires */`);
    emit(`    :: (${quiet(rule.id)} && !${P}faulted) -> ${P}inp = ${detectors.length + qi}`);
  });
  emit(`    fi;`);
  emit(`    ${P}engine_step();`);
  emit(`    ${P}check()`);
  emit(`  }`);
  emit(`  od`);
  emit(`}`);
}

/** What pan reported: the error count, which properties failed, and whether the search was complete. */
export interface PanReport {
  errors: number;
  /** Violated properties of a single-rulebook model (`toPromela`). */
  violated: SpinProperty[];
  /** Violated properties of rulebook i of a batch (`toPromelaBatch`); absent = none. */
  byModel: Map<number, SpinProperty[]>;
  states: number;
  /** False when pan ran out of memory or depth, so "no errors" is not a proof. */
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
    Number.isFinite(errors) && !/max search depth too small|out of memory|reached -DMEMLIM bound|aborted/i.test(text);
  const ordered = (set: Set<SpinProperty>): SpinProperty[] => SPIN_PROPERTIES.filter((p) => set.has(p));
  return {
    errors,
    violated: ordered(single),
    byModel: new Map([...byModel].map(([i, set]) => [i, ordered(set)])),
    states,
    complete,
  };
}
