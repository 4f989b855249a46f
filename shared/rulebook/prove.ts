/**
 * The prover: an exhaustive, breadth-first check of a rulebook against the junction's
 * protection facts (CONTRACT.md §5).
 *
 * What is explored is the product of the engine state (as the real `step` function makes
 * it — the prover never re-implements the rules) and the positions of the trains on the
 * `proving.routes`. Every edge of the search is one environment move: a train arriving,
 * one axle crossing the next detector of its path (one pulse through `step`), or one
 * armed quiet trigger firing (a `tick` through `step`). Because the search is
 * breadth-first and every state remembers the edge it was first reached by, every refuted
 * property comes with a shortest counterexample.
 *
 * See docs/prover.md for the modelling decisions (axle order, abstraction of time, state
 * encoding) and for how the SPIN model in `promela.ts` corresponds.
 *
 * This module is pure: no I/O and no clock. Pass `now` to get timings and a time limit.
 *
 * @example
 * const result = prove(rulebook, { maxStates: 1_000_000 });
 * if (result.verdict === "refuted") console.log(result.properties.find((p) => p.holds === false));
 */
import { initialStep, shownAspects, step, type Change, type EngineInput, type EngineState } from "./engine";
import type { Aspect, PointsLie, Rulebook } from "./schema";

/** The properties of CONTRACT.md §5, in the order results are reported. */
export const PROPERTY_IDS = [
  "settles",
  "no-underflow",
  "no-conflicting-proceeds",
  "one-train-per-section",
  "no-stuck-train",
  "priority-unhindered",
] as const;
export type PropertyId = (typeof PROPERTY_IDS)[number];

/** Plain-words descriptions of each property, for result screens and the printed proof. */
export const PROPERTY_DESCRIPTIONS: Record<PropertyId, string> = {
  settles: "The logic always settles: no reachable state ends in a rule loop.",
  "no-underflow": "No counter is ever driven below zero.",
  "no-conflicting-proceeds": "No two signals of conflicting routes show a proceed aspect at the same time.",
  "one-train-per-section":
    "No two trains occupy the sections of the same route, or of conflicting routes, at the same time.",
  "no-stuck-train":
    "A train waiting at a signal at danger can always get a proceed aspect through the movements of the trains already there and quiet triggers, without needing another train to arrive.",
  "priority-unhindered":
    "A train on the priority route that has passed its approach is never checked at its signal when the junction is otherwise empty.",
};

/** The list of property ids with their descriptions, for menus and reports. */
export const PROPERTIES: { id: PropertyId; description: string }[] = PROPERTY_IDS.map((id) => ({
  id,
  description: PROPERTY_DESCRIPTIONS[id],
}));

/** The safety properties: those a single state or step can break (checked by SPIN too). */
export const SAFETY_PROPERTY_IDS = [
  "no-conflicting-proceeds",
  "one-train-per-section",
  "no-underflow",
  "settles",
] as const satisfies readonly PropertyId[];

/** One move of a counterexample (CONTRACT.md §5). Trains are numbered from 1 in order of arrival. */
export type Move =
  | { type: "arrive"; route: string; axles: number }
  | { type: "pulse"; detector: string; route: string; train: number }
  | { type: "quiet"; rule: string }
  | { type: "points"; points: string; lies: PointsLie };

export interface PropertyResult {
  id: PropertyId;
  /** true: proved; false: refuted (see `counterexample`); null: not decided (limits reached). */
  holds: boolean | null;
  counterexample?: Move[];
  detail?: string;
}

export interface ProofResult {
  verdict: "proved" | "refuted" | "unfinished";
  properties: PropertyResult[];
  stats: { states: number; ms: number; transitions: number };
  /** Why the verdict is "unfinished" (limit reached, cancelled, nothing to prove). */
  reason?: string;
}

export interface ProveOptions {
  /** Stop (verdict "unfinished") after this many distinct states. Default 5,000,000. */
  maxStates?: number;
  /** Stop (verdict "unfinished") after this many milliseconds; needs `now`. */
  maxMs?: number;
  /** Called every few thousand states with the search's size. */
  onProgress?: (p: { states: number; frontier: number; depth: number }) => void;
  /** A millisecond clock (e.g. `() => performance.now()`); shared code does not read one itself. */
  now?: () => number;
  /** Polled with progress; returning true stops the search (verdict "unfinished"). */
  shouldCancel?: () => boolean;
}

export const DEFAULT_MAX_STATES = 5_000_000;
const PROGRESS_EVERY_STATES = 4096;

/* ------------------------------------------------------------------------------------ */
/* The compiled model: routes as arrays of input indices, conflicts as bit masks.        */
/* ------------------------------------------------------------------------------------ */

interface RouteModel {
  index: number;
  id: string;
  signal: string;
  /** approach…, entry, exit… */
  path: string[];
  /** Input index of each detector of `path`. */
  pathInput: number[];
  /** Index of `entry` in `path` (= number of approach detectors). */
  entryIndex: number;
  /** Bit mask of the routes this one conflicts with (not including itself). */
  conflictMask: number;
}

/** An engine input of the abstract model: a pulse at a detector or the firing of one quiet rule. */
type AbstractInput = { kind: "pulse"; detector: string } | { kind: "quiet"; rule: string };

interface Model {
  rulebook: Rulebook;
  routes: RouteModel[];
  inputs: AbstractInput[];
  /** Input index of each quiet rule id. */
  quietInput: Map<string, number>;
  quietRuleIds: string[];
  maxAxles: number;
  maxTrains: number;
  /** Index of the priority route, or -1. */
  priority: number;
  /** Pairs of route indices whose (different) signals must never both show a proceed. */
  signalConflicts: [number, number][];
}

function compileModel(rulebook: Rulebook): Model {
  const proving = rulebook.proving;
  if (!proving) throw new Error("the rulebook has no proving section");
  if (proving.routes.length > 30) throw new Error("the prover handles at most 30 routes");
  const inputs: AbstractInput[] = [];
  const detectorInput = new Map<string, number>();
  const inputOfDetector = (d: string): number => {
    let i = detectorInput.get(d);
    if (i === undefined) {
      i = inputs.length;
      inputs.push({ kind: "pulse", detector: d });
      detectorInput.set(d, i);
    }
    return i;
  };
  const routeIndex = new Map(proving.routes.map((r, i) => [r.id, i]));
  const routes: RouteModel[] = proving.routes.map((r, index) => {
    const path = [...r.approach, r.entry, ...r.exit];
    return {
      index,
      id: r.id,
      signal: r.signal,
      path,
      pathInput: path.map(inputOfDetector),
      entryIndex: r.approach.length,
      conflictMask: 0,
    };
  });
  const signalConflicts: [number, number][] = [];
  for (const [a, b] of proving.conflicts ?? []) {
    const ia = routeIndex.get(a);
    const ib = routeIndex.get(b);
    if (ia === undefined || ib === undefined) throw new Error(`conflict names an unknown route: ${a}, ${b}`);
    if (ia === ib) continue;
    routes[ia].conflictMask |= 1 << ib;
    routes[ib].conflictMask |= 1 << ia;
    // "No two signals": two routes read by one signal cannot be told apart by its aspect.
    if (routes[ia].signal !== routes[ib].signal) signalConflicts.push([ia, ib]);
  }
  const quietInput = new Map<string, number>();
  const quietRuleIds: string[] = [];
  for (const rule of rulebook.rules) {
    if (typeof rule.on === "object" && "quiet" in rule.on) {
      quietInput.set(rule.id, inputs.length);
      quietRuleIds.push(rule.id);
      inputs.push({ kind: "quiet", rule: rule.id });
    }
  }
  let priority = -1;
  if (proving.priority !== undefined) {
    const p = routeIndex.get(proving.priority);
    if (p === undefined) throw new Error(`priority names an unknown route: ${proving.priority}`);
    priority = p;
  }
  return {
    rulebook,
    routes,
    inputs,
    quietInput,
    quietRuleIds,
    maxAxles: proving.maxAxles ?? 2,
    maxTrains: proving.maxTrainsPerRoute ?? 2,
    priority,
    signalConflicts,
  };
}

/* ------------------------------------------------------------------------------------ */
/* Time abstraction: how the abstract inputs are fed to the real step function.          */
/* ------------------------------------------------------------------------------------ */

/**
 * Deadlines of armed quiet triggers are parked here between moves, so that no trigger fires
 * unless the prover chooses it. Which triggers are armed is kept; when they would fire is not
 * (the prover does not trust timing, §5).
 */
const PARKED_DEADLINE = Number.MAX_SAFE_INTEGER;

/** The engine state with the clock taken out: clock 0, every armed deadline parked. */
function normalise(s: EngineState): EngineState {
  const quiet: Record<string, number> = {};
  for (const id of Object.keys(s.quiet).sort()) quiet[id] = PARKED_DEADLINE;
  return {
    ...s,
    clock: 0,
    quiet,
    faulted: s.faulted ? { ...s.faulted, at: 0 } : null,
  };
}

/**
 * Runs one abstract input through the real `step`. A pulse happens at the current clock, so no
 * parked trigger fires; a quiet firing brings only that trigger's deadline to the clock and
 * ticks, so the engine fires exactly it (then settles), as §4 step 1 describes.
 */
function runInput(rulebook: Rulebook, s: EngineState, input: AbstractInput): { state: EngineState; changes: Change[] } {
  if (input.kind === "pulse") {
    return step(rulebook, s, { type: "pulse", detector: input.detector, at: s.clock });
  }
  const ready: EngineState = { ...s, quiet: { ...s.quiet, [input.rule]: s.clock } };
  return step(rulebook, ready, { type: "tick", at: s.clock });
}

/** Is this change the engine's count-underflow alarm (not a rule's own `alarm` action)? See engine.ts. */
export function isUnderflowChange(c: Change): boolean {
  return c.kind === "alarm" && c.to === "count-underflow";
}

/** A canonical text for an engine state: equal text ⇔ equal state (keys sorted at every level). */
function canonical(value: unknown): string {
  if (value === null || typeof value !== "object") return JSON.stringify(value) ?? "undefined";
  if (Array.isArray(value)) return `[${value.map(canonical).join(",")}]`;
  const obj = value as Record<string, unknown>;
  return `{${Object.keys(obj)
    .sort()
    .filter((k) => obj[k] !== undefined)
    .map((k) => `${JSON.stringify(k)}:${canonical(obj[k])}`)
    .join(",")}}`;
}

/* ------------------------------------------------------------------------------------ */
/* Trains.                                                                                */
/* ------------------------------------------------------------------------------------ */

/**
 * A train is the number of detectors of its route's path each axle has crossed, leading axle
 * first: `pos[0] >= pos[1] >= …`, and neighbouring axles differ by at most one (two axles of a
 * train are never separated by two detectors). Trains of a route are kept in order, front first;
 * a train is removed when its last axle crosses the last exit detector.
 */
type Train = readonly number[];
type Trains = readonly (readonly Train[])[];

/**
 * Can axle `k` of train `qi` on route `r` cross the next detector of its path now?
 * - order: the axle ahead of it has already crossed that detector;
 * - spacing: the axle behind it has crossed the previous detector (so it is level with this one);
 * - the train ahead on the same route has cleared that detector (its last axle crossed it);
 * - the leading axle crosses `entry` only while the route's signal shows non-danger.
 */
function canMove(route: RouteModel, queue: readonly Train[], qi: number, k: number, signalShowsProceed: boolean): boolean {
  const train = queue[qi];
  const p = train[k];
  if (p >= route.path.length) return false;
  if (k > 0 && train[k - 1] <= p) return false;
  if (k < train.length - 1 && train[k + 1] < p) return false;
  if (qi > 0) {
    const ahead = queue[qi - 1];
    if (ahead[ahead.length - 1] <= p) return false;
  }
  if (k === 0 && p === route.entryIndex && !signalShowsProceed) return false;
  return true;
}

/** A train occupies its route's section from its leading axle crossing entry until it leaves. */
function occupies(route: RouteModel, train: Train): boolean {
  return train[0] > route.entryIndex;
}

/** A train waits at its signal when its leading axle has crossed every approach detector but not entry. */
function waitsAtSignal(route: RouteModel, train: Train): boolean {
  return train[0] === route.entryIndex;
}

/* ------------------------------------------------------------------------------------ */
/* State-level facts used by the property checks (shared by the prover and the replay).  */
/* ------------------------------------------------------------------------------------ */

interface EngineFacts {
  /** Bit r set: route r's signal shows something other than danger. */
  proceedMask: number;
  faulted: boolean;
  conflictingProceeds: boolean;
}

function engineFacts(model: Model, state: EngineState): EngineFacts {
  const shown: Record<string, Aspect> = shownAspects(model.rulebook, state);
  let proceedMask = 0;
  for (const r of model.routes) if ((shown[r.signal] ?? "danger") !== "danger") proceedMask |= 1 << r.index;
  const conflictingProceeds = model.signalConflicts.some(
    ([a, b]) => (proceedMask & (1 << a)) !== 0 && (proceedMask & (1 << b)) !== 0,
  );
  return { proceedMask, faulted: state.faulted !== null && state.faulted !== undefined, conflictingProceeds };
}

function sectionsOverlap(model: Model, trains: Trains): boolean {
  let occupied = 0;
  for (const r of model.routes) {
    let n = 0;
    for (const t of trains[r.index]) if (occupies(r, t)) n++;
    if (n > 1) return true;
    if (n === 1) {
      if ((occupied & r.conflictMask) !== 0) return true;
      occupied |= 1 << r.index;
    }
  }
  return false;
}

/** Routes (bit mask) with a train waiting at a signal that shows danger. */
function waitingAtDangerMask(model: Model, trains: Trains, proceedMask: number): number {
  let mask = 0;
  for (const r of model.routes) {
    if ((proceedMask & (1 << r.index)) !== 0) continue;
    if (trains[r.index].some((t) => waitsAtSignal(r, t))) mask |= 1 << r.index;
  }
  return mask;
}

/**
 * priority-unhindered is broken in this (settled) state: a priority train waits at its signal,
 * no section is occupied, no other route has a train past its first approach detector, and
 * the priority signal shows danger.
 */
function priorityHindered(model: Model, trains: Trains, proceedMask: number): boolean {
  const p = model.priority;
  if (p < 0 || (proceedMask & (1 << p)) !== 0) return false;
  const pr = model.routes[p];
  if (!trains[p].some((t) => waitsAtSignal(pr, t))) return false;
  for (const r of model.routes) {
    for (const t of trains[r.index]) {
      if (occupies(r, t)) return false;
      if (r.index !== p && t[0] > 0) return false;
    }
  }
  return true;
}

/* ------------------------------------------------------------------------------------ */
/* Growable typed storage and the packed state table.                                     */
/* ------------------------------------------------------------------------------------ */

class IntVec {
  data: Int32Array;
  length = 0;
  constructor(capacity = 1024) {
    this.data = new Int32Array(capacity);
  }
  push(v: number): void {
    if (this.length === this.data.length) {
      const bigger = new Int32Array(this.data.length * 2);
      bigger.set(this.data);
      this.data = bigger;
    }
    this.data[this.length++] = v;
  }
}

/**
 * The trains of a state packed into bytes. Per route: the number of trains, then for each of
 * `maxTrains` slots (front train first, unused slots all zero) its axle count and the number
 * of path detectors each of `maxAxles` axles has crossed (unused axles zero). Equal trains ⇔
 * equal bytes, so a state is (engine state id, these bytes).
 */
interface Packing {
  width: number;
  /** Offset of each route's block. */
  base: number[];
  slotWidth: number;
}

function packing(model: Model): Packing {
  const slotWidth = 1 + model.maxAxles;
  const base: number[] = [];
  let width = 0;
  for (let r = 0; r < model.routes.length; r++) {
    base.push(width);
    width += 1 + model.maxTrains * slotWidth;
  }
  return { width, base, slotWidth };
}

/**
 * Every distinct state: its engine state id and packed trains, found again through an
 * open-addressing hash table (linear probing). Ids are handed out in order of discovery.
 */
class StateTable {
  readonly width: number;
  trains: Uint8Array;
  engine: Int32Array;
  size = 0;
  private slots: Int32Array;
  private mask: number;
  constructor(width: number) {
    this.width = width;
    this.trains = new Uint8Array(width * 4096);
    this.engine = new Int32Array(4096);
    this.slots = new Int32Array(1 << 13).fill(-1);
    this.mask = this.slots.length - 1;
  }
  private hash(engine: number, v: Uint8Array): number {
    let h = Math.imul(engine ^ 0x9e3779b9, 0x85ebca6b);
    for (let i = 0; i < this.width; i++) h = Math.imul(h ^ v[i], 0x01000193);
    return (h ^ (h >>> 15)) >>> 0;
  }
  private equals(id: number, engine: number, v: Uint8Array): boolean {
    if (this.engine[id] !== engine) return false;
    const off = id * this.width;
    for (let i = 0; i < this.width; i++) if (this.trains[off + i] !== v[i]) return false;
    return true;
  }
  /** The id of (engine, v), adding it if new; `isNew` tells which. */
  findOrAdd(engine: number, v: Uint8Array): number {
    let i = this.hash(engine, v) & this.mask;
    for (;;) {
      const id = this.slots[i];
      if (id < 0) break;
      if (this.equals(id, engine, v)) return id;
      i = (i + 1) & this.mask;
    }
    const id = this.size++;
    if (id >= this.engine.length) {
      const engines = new Int32Array(this.engine.length * 2);
      engines.set(this.engine);
      this.engine = engines;
      const trains = new Uint8Array(this.trains.length * 2);
      trains.set(this.trains);
      this.trains = trains;
    }
    this.engine[id] = engine;
    this.trains.set(v, id * this.width);
    this.slots[i] = id;
    if (this.size * 2 > this.slots.length) this.grow();
    return id;
  }
  private grow(): void {
    const slots = new Int32Array(this.slots.length * 2).fill(-1);
    const mask = slots.length - 1;
    const v = new Uint8Array(this.width);
    for (let id = 0; id < this.size; id++) {
      v.set(this.trains.subarray(id * this.width, (id + 1) * this.width));
      let i = this.hash(this.engine[id], v) & mask;
      while (slots[i] >= 0) i = (i + 1) & mask;
      slots[i] = id;
    }
    this.slots = slots;
    this.mask = mask;
  }
}

/* ------------------------------------------------------------------------------------ */
/* The search.                                                                            */
/* ------------------------------------------------------------------------------------ */

/**
 * Proves (or refutes) every §5 property of `rulebook` by exhaustive breadth-first search.
 *
 * The verdict is "proved" only when the whole state space was explored and every property
 * holds; "refuted" when at least one property has a counterexample (properties not decided
 * before a limit have `holds: null`); otherwise "unfinished" with a `reason`.
 */
export function prove(rulebook: Rulebook, options: ProveOptions = {}): ProofResult {
  const now = options.now;
  const started = now ? now() : 0;
  const elapsed = (): number => (now ? now() - started : 0);
  const maxStates = options.maxStates ?? DEFAULT_MAX_STATES;

  let model: Model;
  try {
    model = compileModel(rulebook);
  } catch (err) {
    return {
      verdict: "unfinished",
      properties: [],
      stats: { states: 0, ms: elapsed(), transitions: 0 },
      reason: (err as Error).message,
    };
  }
  const properties: PropertyId[] = PROPERTY_IDS.filter((id) => id !== "priority-unhindered" || model.priority >= 0);
  const nInputs = model.inputs.length;
  const nRoutes = model.routes.length;
  const { maxAxles, maxTrains, routes } = model;
  const { width, base, slotWidth } = packing(model);

  // Move codes: arrivals, then pulses (route, queue slot, axle), then quiet firings.
  const pulseBase = nRoutes * maxAxles;
  const quietBase = pulseBase + nRoutes * maxTrains * maxAxles;

  // Interned engine states, with the outcome of every (engine state, input) pair memoised:
  // the engine is a pure function, and the same engine state meets many train positions.
  const engineStates: EngineState[] = [];
  const engineFactsOf: EngineFacts[] = [];
  const engineArmed: number[][] = [];
  const engineIds = new Map<string, number>();
  let memoNext = new Int32Array(1024 * Math.max(1, nInputs)).fill(-1);
  let memoUnderflow = new Uint8Array(memoNext.length);
  const internEngine = (s: EngineState): number => {
    const n = normalise(s);
    const key = canonical(n);
    let id = engineIds.get(key);
    if (id === undefined) {
      id = engineStates.length;
      engineIds.set(key, id);
      engineStates.push(n);
      engineFactsOf.push(engineFacts(model, n));
      engineArmed.push(
        Object.keys(n.quiet)
          .map((rule) => model.quietInput.get(rule))
          .filter((i): i is number => i !== undefined)
          .sort((x, y) => x - y),
      );
      if ((id + 1) * nInputs > memoNext.length) {
        const next = new Int32Array(memoNext.length * 2).fill(-1);
        next.set(memoNext);
        memoNext = next;
        const under = new Uint8Array(memoNext.length);
        under.set(memoUnderflow);
        memoUnderflow = under;
      }
    }
    return id;
  };
  const engineAfter = (engine: number, input: number): number => {
    const slot = engine * nInputs + input;
    let next = memoNext[slot];
    if (next < 0) {
      const { state, changes } = runInput(rulebook, engineStates[engine], model.inputs[input]);
      next = internEngine(state);
      // internEngine may have replaced the memo arrays, so write through the variables afresh.
      memoNext[slot] = next;
      memoUnderflow[slot] = changes.some(isUnderflowChange) ? 1 : 0;
    }
    return next;
  };

  // Per-route constants, flattened for the inner loop.
  const pathLength = routes.map((r) => r.path.length);
  const entryIndex = routes.map((r) => r.entryIndex);
  const conflictMask = routes.map((r) => r.conflictMask);
  const priority = model.priority;

  // The search graph. States are numbered in breadth-first order, each with the state and move
  // it was first reached by (so the path to any state is a shortest one). The non-arrival
  // edges are kept (forward, grouped by source) for no-stuck-train.
  const table = new StateTable(width);
  const parent = new IntVec(1 << 14);
  const moveOf = new IntVec(1 << 14);
  const depthOf = new IntVec(1 << 14);
  const waitMaskOf = new IntVec(1 << 14);
  const edgeStart = new IntVec(1 << 14);
  const edgeTo = new IntVec(1 << 16);
  let transitions = 0;

  // First violation of each property: a state id (or, for no-underflow, a state and the move out of it).
  const firstBad = new Map<PropertyId, { state: number; move?: number }>();
  let stuckCandidates = 0;

  const cur = new Uint8Array(width);
  const nxt = new Uint8Array(width);

  /** Records the facts about a newly found state (trains in `v`) and checks the state properties. */
  const examine = (id: number, engine: number, v: Uint8Array): void => {
    const facts = engineFactsOf[engine];
    const proceed = facts.proceedMask;
    let waitMask = 0;
    let occupied = 0;
    let overlap = false;
    let priorityWaits = false;
    let othersAway = true;
    for (let r = 0; r < nRoutes; r++) {
      const b = base[r];
      const n = v[b];
      const entry = entryIndex[r];
      let inSection = 0;
      for (let t = 0; t < n; t++) {
        const lead = v[b + 1 + t * slotWidth + 1];
        if (lead > entry) inSection++;
        else if (lead === entry && (proceed & (1 << r)) === 0) {
          waitMask |= 1 << r;
          if (r === priority) priorityWaits = true;
        }
        if (r !== priority && lead > 0) othersAway = false;
      }
      if (inSection > 1) overlap = true;
      if (inSection > 0) {
        if ((occupied & conflictMask[r]) !== 0) overlap = true;
        occupied |= 1 << r;
      }
    }
    waitMaskOf.push(waitMask);
    if (waitMask !== 0) stuckCandidates++;
    if (facts.faulted && !firstBad.has("settles")) firstBad.set("settles", { state: id });
    if (facts.conflictingProceeds && !firstBad.has("no-conflicting-proceeds"))
      firstBad.set("no-conflicting-proceeds", { state: id });
    if (overlap && !firstBad.has("one-train-per-section")) firstBad.set("one-train-per-section", { state: id });
    if (priorityWaits && occupied === 0 && othersAway && !firstBad.has("priority-unhindered"))
      firstBad.set("priority-unhindered", { state: id });
  };

  let currentId = 0;
  let currentDepth = 0;
  /** Finds or adds the state (engine, nxt) reached from the current state by `move`. */
  const reach = (engine: number, move: number, isArrival: boolean): void => {
    transitions++;
    const before = table.size;
    const id = table.findOrAdd(engine, nxt);
    if (table.size > before) {
      parent.push(currentId);
      moveOf.push(move);
      depthOf.push(currentDepth + 1);
      examine(id, engine, nxt);
    }
    if (!isArrival) edgeTo.push(id);
  };

  cur.fill(0);
  const start = initialStep(rulebook, 0);
  const startEngine = internEngine(start.state);
  table.findOrAdd(startEngine, cur);
  parent.push(-1);
  moveOf.push(-1);
  depthOf.push(0);
  examine(0, startEngine, cur);
  // The first settle can itself drive a counter below zero: then the counterexample is empty.
  if (start.changes.some(isUnderflowChange)) firstBad.set("no-underflow", { state: 0 });

  let stopReason: string | undefined;
  for (let id = 0; id < table.size; id++) {
    if (id % PROGRESS_EVERY_STATES === 0 && id > 0) {
      options.onProgress?.({ states: table.size, frontier: table.size - id, depth: depthOf.data[id] });
      if (options.shouldCancel?.()) {
        stopReason = "cancelled";
        break;
      }
      if (options.maxMs !== undefined && now && elapsed() > options.maxMs) {
        stopReason = `time limit of ${options.maxMs} ms reached`;
        break;
      }
    }
    if (table.size >= maxStates) {
      stopReason = `state limit of ${maxStates} reached`;
      break;
    }
    currentId = id;
    currentDepth = depthOf.data[id];
    const engine = table.engine[id];
    cur.set(table.trains.subarray(id * width, (id + 1) * width));
    edgeStart.push(edgeTo.length);
    const proceedMask = engineFactsOf[engine].proceedMask;

    for (let r = 0; r < nRoutes; r++) {
      const b = base[r];
      const n = cur[b];
      // A train arrives.
      if (n < maxTrains) {
        for (let a = 1; a <= maxAxles; a++) {
          nxt.set(cur);
          nxt[b] = n + 1;
          nxt[b + 1 + n * slotWidth] = a;
          reach(engine, r * maxAxles + (a - 1), true);
        }
      }
      // An axle crosses the next detector of its path (see canMove for the rules).
      const length = pathLength[r];
      const entry = entryIndex[r];
      const proceed = (proceedMask & (1 << r)) !== 0;
      for (let t = 0; t < n; t++) {
        const sb = b + 1 + t * slotWidth;
        const axles = cur[sb];
        const aheadLast = t > 0 ? cur[sb - slotWidth + cur[sb - slotWidth]] : 255;
        for (let k = 0; k < axles; k++) {
          const p = cur[sb + 1 + k];
          if (p >= length) continue;
          if (k > 0 && cur[sb + k] <= p) continue;
          if (k < axles - 1 && cur[sb + 2 + k] < p) continue;
          if (aheadLast <= p) continue;
          if (k === 0 && p === entry && !proceed) continue;
          const input = routes[r].pathInput[p];
          const nextEngine = engineAfter(engine, input);
          const move = pulseBase + (r * maxTrains + t) * maxAxles + k;
          if (memoUnderflow[engine * nInputs + input] === 1 && !firstBad.has("no-underflow"))
            firstBad.set("no-underflow", { state: id, move });
          nxt.set(cur);
          nxt[sb + 1 + k] = p + 1;
          if (k === axles - 1 && p + 1 === length) {
            // The train's last axle crossed the last exit: it leaves, the trains behind move up.
            nxt.copyWithin(sb, sb + slotWidth, b + 1 + maxTrains * slotWidth);
            nxt.fill(0, b + 1 + (maxTrains - 1) * slotWidth, b + 1 + maxTrains * slotWidth);
            nxt[b] = n - 1;
          }
          reach(nextEngine, move, false);
        }
      }
    }
    // An armed quiet trigger fires.
    const armed = engineArmed[engine];
    for (let i = 0; i < armed.length; i++) {
      const input = armed[i];
      const nextEngine = engineAfter(engine, input);
      const move = quietBase + (input - (nInputs - model.quietRuleIds.length));
      if (memoUnderflow[engine * nInputs + input] === 1 && !firstBad.has("no-underflow"))
        firstBad.set("no-underflow", { state: id, move });
      nxt.set(cur);
      reach(nextEngine, move, false);
    }
  }

  const finished = stopReason === undefined;
  const nStates = table.size;
  edgeStart.push(edgeTo.length);

  // no-stuck-train: backward reachability, over non-arrival edges, from the states where each
  // route's signal shows a proceed. A state where a train waits at danger on route r and that
  // cannot reach such a state is a stuck train; the first in BFS order is the nearest.
  let stuck: { state: number; route: number } | undefined;
  if (finished && stuckCandidates > 0)
    stuck = findStuckTrain(model, nStates, table.engine, engineFactsOf, waitMaskOf, edgeStart, edgeTo);

  const results: PropertyResult[] = properties.map((pid) => {
    if (pid === "no-stuck-train") {
      if (stuck) {
        const route = model.routes[stuck.route];
        return {
          id: pid,
          holds: false,
          counterexample: pathTo(model, parent, moveOf, stuck.state),
          detail: `after these moves a train waits at signal ${route.signal} (route ${route.id}) and no movement of the trains already there, nor any quiet trigger, can ever make it show a proceed aspect`,
        };
      }
      return finished ? { id: pid, holds: true } : { id: pid, holds: null, detail: "not decided: the search did not finish" };
    }
    const bad = firstBad.get(pid);
    if (bad) {
      const moves = pathTo(model, parent, moveOf, bad.state, bad.move);
      return { id: pid, holds: false, counterexample: moves, detail: describeViolation(pid, model, moves) };
    }
    return finished ? { id: pid, holds: true } : { id: pid, holds: null, detail: "not decided: the search did not finish" };
  });

  const refuted = results.some((p) => p.holds === false);
  const result: ProofResult = {
    verdict: refuted ? "refuted" : finished ? "proved" : "unfinished",
    properties: results,
    stats: { states: nStates, ms: elapsed(), transitions },
  };
  if (!finished) result.reason = stopReason;
  return result;
}

function findStuckTrain(
  model: Model,
  nStates: number,
  engineOf: Int32Array,
  facts: EngineFacts[],
  waitMaskOf: IntVec,
  edgeStart: IntVec,
  edgeTo: IntVec,
): { state: number; route: number } | undefined {
  // Reverse adjacency (compressed rows: for each target, the sources that reach it in one move).
  const nEdges = edgeTo.length;
  const start = new Int32Array(nStates + 1);
  for (let e = 0; e < nEdges; e++) start[edgeTo.data[e] + 1]++;
  for (let s = 0; s < nStates; s++) start[s + 1] += start[s];
  const fill = start.slice(0, nStates);
  const sources = new Int32Array(nEdges);
  for (let s = 0; s < nStates; s++) {
    for (let e = edgeStart.data[s]; e < edgeStart.data[s + 1]; e++) sources[fill[edgeTo.data[e]]++] = s;
  }

  let best: { state: number; route: number } | undefined;
  const canReach = new Uint8Array(nStates);
  const work = new Int32Array(nStates);
  for (const route of model.routes) {
    const bit = 1 << route.index;
    let anyWaiting = false;
    for (let s = 0; s < nStates && !anyWaiting; s++) if (waitMaskOf.data[s] & bit) anyWaiting = true;
    if (!anyWaiting) continue;
    canReach.fill(0);
    let top = 0;
    for (let s = 0; s < nStates; s++) {
      if (facts[engineOf[s]].proceedMask & bit) {
        canReach[s] = 1;
        work[top++] = s;
      }
    }
    while (top > 0) {
      const s = work[--top];
      for (let i = start[s]; i < start[s + 1]; i++) {
        const p = sources[i];
        if (!canReach[p]) {
          canReach[p] = 1;
          work[top++] = p;
        }
      }
    }
    for (let s = 0; s < nStates; s++) {
      if (waitMaskOf.data[s] & bit && !canReach[s]) {
        if (!best || s < best.state) best = { state: s, route: route.index };
        break;
      }
    }
  }
  return best;
}

/* ------------------------------------------------------------------------------------ */
/* Counterexamples.                                                                       */
/* ------------------------------------------------------------------------------------ */

interface NumberedTrain {
  number: number;
  pos: number[];
}

/** Decodes move codes into §5 moves, numbering trains from 1 in order of arrival. */
function pathTo(model: Model, parent: IntVec, moveOf: IntVec, state: number, lastMove?: number): Move[] {
  const codes: number[] = [];
  if (lastMove !== undefined) codes.push(lastMove);
  for (let s = state; parent.data[s] >= 0; s = parent.data[s]) codes.push(moveOf.data[s]);
  codes.reverse();
  const { maxAxles, maxTrains } = model;
  const nRoutes = model.routes.length;
  const pulseBase = nRoutes * maxAxles;
  const quietBase = pulseBase + nRoutes * maxTrains * maxAxles;
  const queues: NumberedTrain[][] = model.routes.map(() => []);
  let arrivals = 0;
  return codes.map((code): Move => {
    if (code < pulseBase) {
      const r = Math.floor(code / maxAxles);
      const axles = (code % maxAxles) + 1;
      queues[r].push({ number: ++arrivals, pos: new Array<number>(axles).fill(0) });
      return { type: "arrive", route: model.routes[r].id, axles };
    }
    if (code < quietBase) {
      const c = code - pulseBase;
      const k = c % maxAxles;
      const qi = Math.floor(c / maxAxles) % maxTrains;
      const r = Math.floor(c / (maxAxles * maxTrains));
      const route = model.routes[r];
      const train = queues[r][qi];
      const detector = route.path[train.pos[k]];
      train.pos[k]++;
      if (k === train.pos.length - 1 && train.pos[k] === route.path.length) queues[r].splice(qi, 1);
      return { type: "pulse", detector, route: route.id, train: train.number };
    }
    return { type: "quiet", rule: model.quietRuleIds[code - quietBase] };
  });
}

function describeViolation(pid: PropertyId, model: Model, moves: Move[]): string {
  const n = moves.length;
  switch (pid) {
    case "settles":
      return n === 0
        ? "the standing rules loop already when the rulebook starts"
        : `after ${n} moves the standing rules run more than 64 times in one settle (a rule loop)`;
    case "no-underflow":
      return `the last of these ${n} moves drives a counter below zero`;
    case "no-conflicting-proceeds":
      return `after ${n} moves, signals of conflicting routes show proceed aspects at once`;
    case "one-train-per-section":
      return `after ${n} moves, two trains occupy the sections of the same or conflicting routes`;
    case "priority-unhindered":
      return `after ${n} moves a train on route ${model.routes[model.priority]?.id} waits at its signal at danger with the junction otherwise clear`;
    default:
      return "";
  }
}

/* ------------------------------------------------------------------------------------ */
/* Replay.                                                                                */
/* ------------------------------------------------------------------------------------ */

/** Where the trains are during a replay: one entry per train, with its axles' progress. */
export interface TrainView {
  train: number;
  route: string;
  axles: number;
  /** Number of detectors of the route's path each axle has crossed, leading axle first. */
  crossed: number[];
}

export interface ReplayStep {
  move: Move;
  /** The engine input the move became (none for an arrival, which is not seen by any detector). */
  input: EngineInput | null;
  /**
   * False when the move is a quiet firing that the real clock could not produce at this point
   * (another armed trigger would fire first): the prover does not trust timing, so such a
   * firing is still a valid counterexample step, and the replay forces it.
   */
  timed: boolean;
  state: EngineState;
  changes: Change[];
  shown: Record<string, Aspect>;
  trains: TrainView[];
  /** Properties this step or the state after it visibly breaks. */
  violates: PropertyId[];
}

export interface Replay {
  initial: EngineState;
  /** Properties broken by the start state itself (e.g. a rule loop while starting). */
  initialViolates: PropertyId[];
  steps: ReplayStep[];
}

/**
 * Turns a counterexample into engine inputs and runs them through `step`, from the rulebook's
 * start state, showing after each move the state, the changes (with the rule that made each),
 * the shown aspects, the trains, and which properties are visibly broken.
 *
 * Inputs get real times: pulses 1 ms apart while no armed quiet trigger is due; a quiet firing
 * becomes a tick at its trigger's deadline. Throws if a move is not possible (for example an
 * axle crossing entry at danger), so a replay that completes is a genuine run.
 *
 * "no-stuck-train" shows as visibly broken whenever a train waits at a danger signal; that
 * the wait lasts for ever is what the prover established, not something one run can show.
 */
export function replayCounterexample(rulebook: Rulebook, moves: Move[]): Replay {
  const model = compileModel(rulebook);
  const routeIndex = new Map(model.routes.map((r) => [r.id, r.index]));
  const queues: NumberedTrain[][] = model.routes.map(() => []);
  let arrivals = 0;
  const start = initialStep(rulebook, 0);
  let state = start.state;
  const initial = state;
  const view = (): TrainView[] =>
    queues.flatMap((q, r) =>
      q.map((t) => ({ train: t.number, route: model.routes[r].id, axles: t.pos.length, crossed: t.pos.slice() })),
    );
  const trainsNow = (): Trains => queues.map((q) => q.map((t) => t.pos));
  const stateViolations = (changes: Change[]): PropertyId[] => {
    const facts = engineFacts(model, state);
    const out: PropertyId[] = [];
    if (facts.faulted) out.push("settles");
    if (changes.some(isUnderflowChange)) out.push("no-underflow");
    if (facts.conflictingProceeds) out.push("no-conflicting-proceeds");
    if (sectionsOverlap(model, trainsNow())) out.push("one-train-per-section");
    if (waitingAtDangerMask(model, trainsNow(), facts.proceedMask) !== 0) out.push("no-stuck-train");
    if (priorityHindered(model, trainsNow(), facts.proceedMask)) out.push("priority-unhindered");
    return out;
  };
  const initialViolates = stateViolations(start.changes).filter((p) => p !== "no-stuck-train");

  const steps = moves.map((move, index): ReplayStep => {
    const where = `move ${index + 1} (${JSON.stringify(move)})`;
    let input: EngineInput | null = null;
    let timed = true;
    let changes: Change[] = [];
    if (move.type === "arrive") {
      const r = routeIndex.get(move.route);
      if (r === undefined) throw new Error(`${where}: unknown route`);
      if (queues[r].length >= model.maxTrains) throw new Error(`${where}: the route already has its most trains`);
      if (move.axles < 1 || move.axles > model.maxAxles) throw new Error(`${where}: axles out of range`);
      queues[r].push({ number: ++arrivals, pos: new Array<number>(move.axles).fill(0) });
    } else if (move.type === "pulse") {
      const r = routeIndex.get(move.route);
      if (r === undefined) throw new Error(`${where}: unknown route`);
      const route = model.routes[r];
      const q = queues[r];
      const qi = q.findIndex((t) => t.number === move.train);
      if (qi < 0) throw new Error(`${where}: no such train on the route`);
      const proceed = (shownAspects(rulebook, state)[route.signal] ?? "danger") !== "danger";
      const positions = q.map((t) => t.pos);
      const k = q[qi].pos.findIndex((p, axle) => route.path[p] === move.detector && canMove(route, positions, qi, axle, proceed));
      if (k < 0) throw new Error(`${where}: no axle of that train may cross that detector now`);
      const deadlines = Object.values(state.quiet);
      const soonest = deadlines.length ? Math.min(...deadlines) : Infinity;
      const at = state.clock + 1 < soonest ? state.clock + 1 : state.clock;
      input = { type: "pulse", detector: move.detector, at };
      ({ state, changes } = step(rulebook, state, input));
      const t = q[qi];
      t.pos[k]++;
      if (k === t.pos.length - 1 && t.pos[k] === route.path.length) q.splice(qi, 1);
    } else if (move.type === "points") {
      throw new Error(`${where}: this rulebook has no points model`);
    } else {
      const deadline = state.quiet[move.rule];
      if (deadline === undefined) throw new Error(`${where}: that quiet trigger is not armed`);
      // Timed only if no other armed trigger is due at or before this one's deadline.
      const firesAlone = Object.entries(state.quiet).every(([id, d]) => id === move.rule || d > deadline);
      if (firesAlone) {
        input = { type: "tick", at: deadline };
        ({ state, changes } = step(rulebook, state, input));
      } else {
        // Out of timed order: bring only this trigger due now, as the prover does.
        timed = false;
        input = { type: "tick", at: state.clock };
        ({ state, changes } = step(rulebook, { ...state, quiet: { ...state.quiet, [move.rule]: state.clock } }, input));
      }
    }
    return {
      move,
      input,
      timed,
      state,
      changes,
      shown: shownAspects(rulebook, state),
      trains: view(),
      violates: stateViolations(changes),
    };
  });
  return { initial, initialViolates, steps };
}
