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
  const walkCondition = (c: Condition | undefined): void => {
    if (!c) return;
    if ("aspect" in c) addSignal(c.aspect);
    else if ("not" in c) walkCondition(c.not);
    else if ("all" in c) c.all.forEach(walkCondition);
    else if ("any" in c) c.any.forEach(walkCondition);
  };
  for (const rule of rulebook.rules) {
    walkCondition(rule.if);
    for (const a of rule.do) if ("show" in a) addSignal(a.show);
  }
  const quietRules = rulebook.rules.filter((r) => typeof r.on === "object" && "quiet" in r.on);

  const latch = (n: string): string => `l_${latchNames.indexOf(n)}`;
  const counter = (n: string): string => `c_${counterNames.indexOf(n)}`;
  const selector = (n: string): string => `s_${selectorNames.indexOf(n)}`;
  const wanted = (n: string): string => `w_${signalNames.indexOf(n)}`;
  const quiet = (ruleId: string): string => `q_${quietRules.findIndex((r) => r.id === ruleId)}`;
  const comparison = (op: string): string => (op === "==" ? "==" : op === "!=" ? "!=" : op);

  const cond = (c: Condition | undefined): string => {
    if (!c) return "1";
    if ("latch" in c) return latch(c.latch);
    if ("count" in c) return `(${counter(c.count)} ${comparison(c.op)} ${c.value})`;
    if ("selector" in c) {
      const i = rulebook.selectors[c.selector]?.values.indexOf(c.is) ?? -1;
      return i < 0 ? "0" : `(${selector(c.selector)} == ${i})`;
    }
    if ("aspect" in c) return `(${wanted(c.aspect)} == ${ASPECT_CODE[c.is]})`;
    if ("not" in c) return `!(${cond(c.not)})`;
    if ("all" in c) return c.all.length ? `(${c.all.map(cond).join(" && ")})` : "1";
    return c.any.length ? `(${c.any.map(cond).join(" || ")})` : "0";
  };

  const action = (a: Action): string => {
    if ("set" in a) return `${latch(a.set)} = 1`;
    if ("clear" in a) return `${latch(a.clear)} = 0`;
    if ("add" in a) {
      const c = counter(a.add);
      if (a.by >= 0) return `${c} = ${c} + ${a.by}`;
      // §4 step 4: an add that would go below zero sets 0 and raises the underflow alarm.
      return `if :: (${c} + ${a.by} < 0) -> ${c} = 0; uf = 1 :: else -> ${c} = ${c} + ${a.by} fi`;
    }
    if ("zero" in a) return `${counter(a.zero)} = 0`;
    if ("select" in a) return `${selector(a.select)} = ${rulebook.selectors[a.select].values.indexOf(a.value)}`;
    if ("show" in a) return `${wanted(a.show)} = ${ASPECT_CODE[a.aspect]}`;
    return "skip /* alarm: no state change */";
  };
  const actions = (list: Action[]): string => (list.length ? list.map(action).join("; ") : "skip");

  const stateVars = [
    ...latchNames.map(latch),
    ...counterNames.map(counter),
    ...selectorNames.map(selector),
    ...signalNames.map(wanted),
  ];

  const out: string[] = [];
  const emit = (line = ""): void => {
    out.push(line);
  };
  emit(`/* Blocklight rulebook model, generated by shared/rulebook/promela.ts (see docs/prover.md). */`);
  emit(`/* Property labels: a constant 1 named after the property, first in each assert. */`);
  for (const p of SPIN_PROPERTIES) emit(`hidden byte ${label(p)} = 1;`);
  emit();
  latchNames.forEach((n) => emit(`bool ${latch(n)} = ${rulebook.latches[n] ? 1 : 0}; /* latch ${n} */`));
  counterNames.forEach((n) => emit(`int ${counter(n)} = ${rulebook.counters[n]}; /* counter ${n} */`));
  selectorNames.forEach((n) => {
    const s = rulebook.selectors[n];
    emit(`byte ${selector(n)} = ${Math.max(0, s.values.indexOf(s.initial))}; /* selector ${n}: ${s.values.join(", ")} */`);
  });
  signalNames.forEach((n) =>
    emit(`byte ${wanted(n)} = ${ASPECT_CODE[rulebook.initial[n] ?? "danger"]}; /* wanted aspect of signal ${n} */`),
  );
  quietRules.forEach((r) => emit(`bool ${quiet(r.id)}; /* quiet trigger of rule ${r.id} armed */`));
  emit(`bool faulted;`);
  proving.routes.forEach((r, ri) => {
    emit(`byte n_${ri}; /* trains on route ${r.id} */`);
    emit(`byte ax_${ri}[${maxTrains}]; /* axles of each train, front train first */`);
    emit(`byte pos_${ri}[${maxTrains * maxAxles}]; /* detectors crossed by each axle */`);
  });
  emit();
  emit(`/* Scratch space, not part of the state. */`);
  emit(`hidden byte uf; hidden byte uf_before; hidden byte found; hidden byte runs;`);
  const passRules = rulebook.rules.filter((r) => typeof r.on === "object" && "pass" in r.on);
  passRules.forEach((_, i) => emit(`hidden byte sel_${i};`));
  stateVars.forEach((v) => emit(`hidden int old_${v};`));
  emit();

  // Settle: the first standing rule (in rule order) whose condition holds and whose actions
  // change the state runs; more than MAX_SETTLE_RUNS runs is a rule loop.
  const standing = rulebook.rules.filter((r) => r.on === "standing");
  emit(`inline settle() {`);
  emit(`  runs = 0;`);
  emit(`  do`);
  emit(`  :: faulted -> break`);
  emit(`  :: else ->`);
  emit(`    found = 0;`);
  for (const rule of standing) {
    emit(`    /* standing rule ${rule.id} */`);
    emit(`    if`);
    emit(`    :: (!found && ${cond(rule.if)}) ->`);
    emit(`      ${stateVars.map((v) => `old_${v} = ${v}`).join("; ") || "skip"};`);
    emit(`      uf_before = uf;`);
    emit(`      ${actions(rule.do)};`);
    const same = stateVars.map((v) => `old_${v} == ${v}`).join(" && ") || "1";
    // A 65th run does not happen: the state after 64 runs is kept and the rulebook faults.
    const restore = stateVars.map((v) => `${v} = old_${v}`).join("; ") || "skip";
    emit(`      if`);
    emit(`      :: (${same}) -> uf = uf_before`);
    emit(`      :: else -> found = 1;`);
    emit(`         if :: (runs == ${MAX_SETTLE_RUNS}) -> ${restore}; uf = uf_before; faulted = 1 :: else -> runs++ fi`);
    emit(`      fi`);
    emit(`    :: else -> skip`);
    emit(`    fi;`);
  }
  emit(`    if`);
  emit(`    :: found -> skip`);
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
    emit(`inline pulse_${di}() { /* detector ${d} */`);
    emit(`  if`);
    emit(`  :: !faulted ->`);
    const mine = passRules.map((r, i) => ({ r, i })).filter(({ r }) => (r.on as { pass: string }).pass === d);
    for (const { r, i } of mine) emit(`    sel_${i} = ${cond(r.if)}; /* rule ${r.id} */`);
    for (const { r, i } of mine) emit(`    if :: sel_${i} -> ${actions(r.do)} :: else -> skip fi;`);
    for (const q of quietRules.filter((r) => (r.on as { quiet: string }).quiet === d)) emit(`    ${quiet(q.id)} = 1;`);
    emit(`    settle()`);
    emit(`  :: else -> skip`);
    emit(`  fi`);
    emit(`}`);
  });
  emit();

  // The property asserts, after every move.
  const shownProceed = (signal: string): string => `(!faulted && ${wanted(signal)} != 0)`;
  const routeIndex = new Map(proving.routes.map((r, i) => [r.id, i]));
  const occupied = (ri: number): string => {
    const entry = proving.routes[ri].approach.length;
    const terms: string[] = [];
    for (let t = 0; t < maxTrains; t++) terms.push(`((n_${ri} > ${t} && pos_${ri}[${t * maxAxles}] > ${entry}) -> 1 : 0)`);
    return `(${terms.join(" + ")})`;
  };
  emit(`inline check() {`);
  emit(`  assert(${label("settles")} && !faulted);`);
  emit(`  assert(${label("no-underflow")} && !uf);`);
  for (const [a, b] of proving.conflicts ?? []) {
    const ra = proving.routes[routeIndex.get(a)!];
    const rb = proving.routes[routeIndex.get(b)!];
    if (!ra || !rb || ra === rb) continue;
    if (ra.signal !== rb.signal)
      emit(`  assert(${label("no-conflicting-proceeds")} && !(${shownProceed(ra.signal)} && ${shownProceed(rb.signal)}));`);
  }
  proving.routes.forEach((_, ri) => emit(`  assert(${label("one-train-per-section")} && ${occupied(ri)} <= 1);`));
  for (const [a, b] of proving.conflicts ?? []) {
    const ia = routeIndex.get(a)!;
    const ib = routeIndex.get(b)!;
    if (ia === ib) continue;
    emit(`  assert(${label("one-train-per-section")} && !(${occupied(ia)} > 0 && ${occupied(ib)} > 0));`);
  }
  emit(`}`);
  emit();

  emit(`init {`);
  emit(`  atomic { uf = 0; settle(); check() };`);
  emit(`  do`);
  proving.routes.forEach((route, ri) => {
    const path = [...route.approach, route.entry, ...route.exit];
    const length = path.length;
    const entry = route.approach.length;
    emit(`  /* route ${route.id}: a train arrives */`);
    emit(`  :: atomic { n_${ri} < ${maxTrains} -> if ${Array.from({ length: maxAxles }, (_, a) => `:: ax_${ri}[n_${ri}] = ${a + 1}`).join(" ")} fi; n_${ri}++ }`);
    for (let t = 0; t < maxTrains; t++) {
      for (let k = 0; k < maxAxles; k++) {
        const p = (axle: number): string => `pos_${ri}[${t * maxAxles + axle}]`;
        const guards = [`n_${ri} > ${t}`, `ax_${ri}[${t}] > ${k}`, `${p(k)} < ${length}`];
        if (k > 0) guards.push(`${p(k - 1)} > ${p(k)}`);
        // the axle behind has crossed the previous detector (it is level with this axle)
        if (k < maxAxles - 1) guards.push(`(ax_${ri}[${t}] <= ${k + 1} || ${p(k + 1)} >= ${p(k)})`);
        // the train ahead has cleared the detector
        if (t > 0) guards.push(`pos_${ri}[${(t - 1) * maxAxles} + ax_${ri}[${t - 1}] - 1] > ${p(k)}`);
        // the leading axle crosses entry only while the signal shows non-danger
        if (k === 0) guards.push(`(${p(k)} != ${entry} || ${shownProceed(route.signal)})`);
        emit(`  /* route ${route.id}: axle ${k + 1} of train slot ${t + 1} crosses its next detector */`);
        emit(`  :: atomic { ${guards.join(" && ")} ->`);
        emit(`       uf = 0;`);
        emit(`       if`);
        path.forEach((d, i) => emit(`       :: (${p(k)} == ${i}) -> pulse_${detectors.indexOf(d)}() /* ${d} */`));
        emit(`       fi;`);
        emit(`       ${p(k)}++;`);
        // The last axle crossing the last exit detector: the train leaves; later trains move up.
        const shift: string[] = [];
        for (let u = t; u < maxTrains - 1; u++) {
          shift.push(`ax_${ri}[${u}] = ax_${ri}[${u + 1}]`);
          for (let a = 0; a < maxAxles; a++) shift.push(`pos_${ri}[${u * maxAxles + a}] = pos_${ri}[${(u + 1) * maxAxles + a}]`);
        }
        shift.push(`ax_${ri}[${maxTrains - 1}] = 0`);
        for (let a = 0; a < maxAxles; a++) shift.push(`pos_${ri}[${(maxTrains - 1) * maxAxles + a}] = 0`);
        shift.push(`n_${ri}--`);
        emit(`       if :: (ax_${ri}[${t}] == ${k + 1} && ${p(k)} == ${length}) -> ${shift.join("; ")} :: else -> skip fi;`);
        emit(`       check() }`);
      }
    }
  });
  quietRules.forEach((rule) => {
    emit(`  /* quiet trigger of rule ${rule.id} fires */`);
    // A faulted rulebook fires no quiet triggers (they stay armed, as in the engine).
    emit(`  :: atomic { (${quiet(rule.id)} && !faulted) ->`);
    emit(`       uf = 0; ${quiet(rule.id)} = 0;`);
    emit(`       if :: ${cond(rule.if)} -> ${actions(rule.do)} :: else -> skip fi;`);
    emit(`       settle();`);
    emit(`       check() }`);
  });
  emit(`  od`);
  emit(`}`);
  return out.join("\n") + "\n";
}

/** What pan reported: the error count, which properties failed, and whether the search was complete. */
export interface PanReport {
  errors: number;
  violated: SpinProperty[];
  states: number;
  /** False when pan ran out of memory or depth, so a "no errors" is not a proof. */
  complete: boolean;
}

/** Reads pan's output (run with `-c0 -e`, so every violated assertion is listed). */
export function parsePanOutput(text: string): PanReport {
  const errors = Number(/errors:\s*(\d+)/.exec(text)?.[1] ?? NaN);
  const violated = new Set<SpinProperty>();
  for (const m of text.matchAll(/assertion violated \(?\s*(\w+)/g)) {
    const p = SPIN_PROPERTIES.find((id) => label(id) === m[1]);
    if (p) violated.add(p);
  }
  const states = Number(/(\d+(?:e\+\d+)?) states, stored/.exec(text)?.[1] ?? NaN);
  const complete =
    Number.isFinite(errors) &&
    !/max search depth too small|out of memory|reached -DMEMLIM bound|aborted/i.test(text);
  return { errors, violated: SPIN_PROPERTIES.filter((p) => violated.has(p)), states, complete };
}
