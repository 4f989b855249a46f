/**
 * The search: breadth first over (engine state, packed trains), each edge one move of the
 * environment (`environment.ts`). States are numbered in discovery order, which is breadth-first
 * order, and each remembers the state and move it was first reached by, so every refuted
 * property comes with a shortest counterexample.
 */
import { initialStep, type EngineState } from "../engine";
import type { Rulebook } from "../schema";
import { canonical, engineFacts, isUnderflowChange, normalise, runInput, type EngineFacts } from "./abstraction";
import { forEachMove, moveCodes, MOVE_ARRIVAL, MOVE_MISROUTED, MOVE_UNLOCKED, packing } from "./environment";
import { compileModel, pointsInput, type Model, type PointsWorking } from "./model";
import { describeMove, TrainNumbers, type Move, type PathStep } from "./moves";
import { findStuckTrain, judgeState, propertiesOf, type PropertyId } from "./properties";
import { IntVec, StateTable } from "./stateTable";

export interface PropertyResult {
  id: PropertyId;
  /** true: proved; false: refuted (see `counterexample`); null: not decided (limits reached). */
  holds: boolean | null;
  counterexample?: Move[];
  detail?: string;
}

/** Which limit ended an unfinished search. */
export type StopCause = "states" | "memory" | "time" | "cancelled";

export interface ProofResult {
  verdict: "proved" | "refuted" | "unfinished";
  properties: PropertyResult[];
  stats: { states: number; ms: number; transitions: number; bytes: number };
  /** Why the verdict is "unfinished" (limit reached, cancelled, nothing to prove), in words. */
  reason?: string;
  /** Which limit stopped the search, when one did. */
  stoppedBy?: StopCause;
}

export interface ProveOptions {
  /** Stop (verdict "unfinished") after this many distinct states. Default: no state limit. */
  maxStates?: number;
  /** Stop when the search's own storage passes this many bytes. Default {@link DEFAULT_MAX_BYTES}. */
  maxBytes?: number;
  /** Stop (verdict "unfinished") after this many milliseconds; needs `now`. */
  maxMs?: number;
  /** Called every few thousand states with the search's size. */
  onProgress?: (p: { states: number; frontier: number; depth: number }) => void;
  /** A millisecond clock (e.g. `() => performance.now()`); shared code does not read one itself. */
  now?: () => number;
  /** Polled with progress; returning true stops the search (verdict "unfinished"). */
  shouldCancel?: () => boolean;
  /** How each points is worked (from the layout); see `compileModel`. */
  points?: PointsWorking;
}

/** No fixed state limit: memory and time decide (issue 16). Kept for callers that pass one on. */
export const DEFAULT_MAX_STATES = Number.POSITIVE_INFINITY;
/** The search's typed storage may grow to this (the JavaScript heap stays small beside it). */
export const DEFAULT_MAX_BYTES = 1536 * 1024 * 1024;
const PROGRESS_EVERY_STATES = 4096;

/** Interned engine states, with the outcome of every (engine state, input) pair memoised. */
class EngineStore {
  readonly states: EngineState[] = [];
  readonly facts: EngineFacts[] = [];
  private ids = new Map<string, number>();
  private memoNext: Int32Array;
  private memoUnderflow: Uint8Array;
  constructor(private readonly model: Model) {
    this.memoNext = new Int32Array(1024 * Math.max(1, model.inputs.length)).fill(-1);
    this.memoUnderflow = new Uint8Array(this.memoNext.length);
  }
  intern(s: EngineState): number {
    const n = normalise(s);
    const key = canonical(n);
    let id = this.ids.get(key);
    if (id === undefined) {
      id = this.states.length;
      this.ids.set(key, id);
      this.states.push(n);
      this.facts.push(engineFacts(this.model, n));
      const nInputs = this.model.inputs.length;
      if ((id + 1) * nInputs > this.memoNext.length) {
        const next = new Int32Array(this.memoNext.length * 2).fill(-1);
        next.set(this.memoNext);
        this.memoNext = next;
        const under = new Uint8Array(next.length);
        under.set(this.memoUnderflow);
        this.memoUnderflow = under;
      }
    }
    return id;
  }
  /** The engine state after `input`; `underflow` then says whether that step drove a counter below 0. */
  after(engine: number, input: number): number {
    const slot = engine * this.model.inputs.length + input;
    let next = this.memoNext[slot];
    if (next < 0) {
      const { state, changes } = runInput(this.model, this.states[engine], this.model.inputs[input]);
      next = this.intern(state);
      this.memoNext[slot] = next;
      this.memoUnderflow[slot] = changes.some(isUnderflowChange) ? 1 : 0;
    }
    return next;
  }
  underflows(engine: number, input: number): boolean {
    return this.memoUnderflow[engine * this.model.inputs.length + input] === 1;
  }
  get bytes(): number {
    return this.memoNext.byteLength + this.memoUnderflow.byteLength;
  }
}

/**
 * The start of a proof (§4 "Start", §5): initial values, settle, then — when points are
 * modelled — each modelled points reported `normal` once, in id order (inputs, not moves).
 */
export function startState(model: Model): { state: EngineState; underflow: boolean } {
  const start = initialStep(model.rulebook, 0);
  let state = start.state;
  let underflow = start.changes.some(isUnderflowChange);
  for (const p of model.points) {
    const r = runInput(model, state, model.inputs[pointsInput(model, p.index, "normal")]);
    state = r.state;
    underflow ||= r.changes.some(isUnderflowChange);
  }
  return { state, underflow };
}

/**
 * Proves (or refutes) every §5 property of `rulebook` by exhaustive breadth-first search.
 *
 * The verdict is "proved" only when the whole state space was explored and every property
 * holds; "refuted" when at least one property has a counterexample (properties not decided
 * before a limit have `holds: null`); otherwise "unfinished" with a `reason` and `stoppedBy`.
 */
export function prove(rulebook: Rulebook, options: ProveOptions = {}): ProofResult {
  const now = options.now;
  const started = now ? now() : 0;
  const elapsed = (): number => (now ? now() - started : 0);
  const maxStates = options.maxStates ?? DEFAULT_MAX_STATES;
  const maxBytes = options.maxBytes ?? DEFAULT_MAX_BYTES;

  let model: Model;
  try {
    model = compileModel(rulebook, options.points);
  } catch (err) {
    return { verdict: "unfinished", properties: [], stats: { states: 0, ms: elapsed(), transitions: 0, bytes: 0 }, reason: (err as Error).message };
  }
  const properties = propertiesOf(model);
  const pack = packing(model);
  const codes = moveCodes(model);
  const engines = new EngineStore(model);
  const width = pack.width;

  const table = new StateTable(width);
  const parent = new IntVec(1 << 14);
  const moveOf = new IntVec(1 << 14);
  const depthOf = new IntVec(1 << 14);
  const waitMaskOf = new IntVec(1 << 14);
  const edgeStart = new IntVec(1 << 14);
  const edgeTo = new IntVec(1 << 16);
  const bytesUsed = (): number =>
    table.bytes + parent.bytes + moveOf.bytes + depthOf.bytes + waitMaskOf.bytes + edgeStart.bytes + edgeTo.bytes + engines.bytes;
  let transitions = 0;

  // First violation of each property: a state, or for a violating move, the state it leaves and the move.
  const firstBad = new Map<PropertyId, { state: number; move?: number }>();
  const noteBad = (pid: PropertyId, state: number, move?: number): void => {
    if (!firstBad.has(pid)) firstBad.set(pid, move === undefined ? { state } : { state, move });
  };
  let stuckCandidates = 0;

  const examine = (id: number, engine: number, v: Uint8Array): void => {
    const facts = engines.facts[engine];
    const verdict = judgeState(model, pack, facts, v);
    waitMaskOf.push(verdict.waitMask);
    if (verdict.waitMask !== 0) stuckCandidates++;
    if (facts.faulted) noteBad("settles", id);
    if (facts.conflictingProceeds) noteBad("no-conflicting-proceeds", id);
    if (verdict.overlap) noteBad("one-train-per-section", id);
    if (verdict.priorityHindered && model.priority >= 0) noteBad("priority-unhindered", id);
  };

  const cur = new Uint8Array(width);
  const nxt = new Uint8Array(width);
  const begin = startState(model);
  const startEngine = engines.intern(begin.state);
  table.findOrAdd(startEngine, cur);
  parent.push(-1);
  moveOf.push(-1);
  depthOf.push(0);
  examine(0, startEngine, cur);
  // The first settle (or a first points report) can itself drive a counter below zero.
  if (begin.underflow) noteBad("no-underflow", 0);

  let currentId = 0;
  let currentEngine = 0;
  let currentDepth = 0;
  const visit = (code: number, input: number, flags: number): void => {
    transitions++;
    if ((flags & MOVE_MISROUTED) !== 0) {
      noteBad("points-set-for-train", currentId, code);
      return;
    }
    if ((flags & MOVE_UNLOCKED) !== 0) noteBad("points-locked", currentId, code);
    let engine = currentEngine;
    if (input >= 0) {
      engine = engines.after(currentEngine, input);
      if (engines.underflows(currentEngine, input)) noteBad("no-underflow", currentId, code);
    }
    const before = table.size;
    const id = table.findOrAdd(engine, nxt);
    if (table.size > before) {
      parent.push(currentId);
      moveOf.push(code);
      depthOf.push(currentDepth + 1);
      examine(id, engine, nxt);
    }
    if ((flags & MOVE_ARRIVAL) === 0) edgeTo.push(id);
  };

  let stoppedBy: { cause: StopCause; reason: string } | undefined;
  for (let id = 0; id < table.size; id++) {
    if (id % PROGRESS_EVERY_STATES === 0 && id > 0) {
      options.onProgress?.({ states: table.size, frontier: table.size - id, depth: depthOf.data[id] });
      if (options.shouldCancel?.()) {
        stoppedBy = { cause: "cancelled", reason: "cancelled" };
        break;
      }
      if (options.maxMs !== undefined && now && elapsed() > options.maxMs) {
        stoppedBy = { cause: "time", reason: `time limit of ${options.maxMs} ms reached after ${table.size} states` };
        break;
      }
      if (bytesUsed() > maxBytes) {
        stoppedBy = { cause: "memory", reason: `memory limit of ${Math.round(maxBytes / 1048576)} MB reached after ${table.size} states` };
        break;
      }
    }
    if (table.size >= maxStates) {
      stoppedBy = { cause: "states", reason: `state limit of ${maxStates} reached` };
      break;
    }
    currentId = id;
    currentDepth = depthOf.data[id];
    currentEngine = table.engine[id];
    cur.set(table.trains.subarray(id * width, (id + 1) * width));
    edgeStart.push(edgeTo.length);
    forEachMove(model, pack, codes, engines.facts[currentEngine], cur, nxt, visit);
  }

  const finished = stoppedBy === undefined;
  const nStates = table.size;
  edgeStart.push(edgeTo.length);

  let stuck: { state: number; group: number } | undefined;
  if (finished && stuckCandidates > 0) {
    stuck = findStuckTrain(model, nStates, (s) => engines.facts[table.engine[s]].proceedMask, waitMaskOf, edgeStart, edgeTo);
  }

  /** The moves from the start to `state`, then `lastMove` (if any). */
  const pathTo = (state: number, lastMove?: number): Move[] => {
    const chain: number[] = [];
    for (let s = state; s >= 0; s = parent.data[s]) chain.push(s);
    chain.reverse();
    const steps: PathStep[] = [];
    for (let i = 0; i < chain.length; i++) {
      const s = chain[i];
      const code = i + 1 < chain.length ? moveOf.data[chain[i + 1]] : lastMove;
      if (code === undefined) break;
      steps.push({ facts: engines.facts[table.engine[s]], trains: table.trains.slice(s * width, (s + 1) * width), code });
    }
    const numbers = new TrainNumbers(model);
    return steps.map((step) => describeMove(model, pack, codes, step, numbers).move);
  };

  const undecided = { holds: null, detail: "not decided: the search did not finish" } as const;
  const results: PropertyResult[] = properties.map((pid) => {
    if (pid === "no-stuck-train") {
      if (stuck) {
        const group = model.groups[stuck.group];
        return {
          id: pid,
          holds: false,
          counterexample: pathTo(stuck.state),
          detail: `after these moves a train waits at signal ${group.signal} (route ${model.routes[group.routes[0]].id}) and no movement of the trains already there, nor any quiet trigger or points, can ever make it show a proceed aspect`,
        };
      }
      return finished ? { id: pid, holds: true } : { id: pid, ...undecided };
    }
    const bad = firstBad.get(pid);
    if (bad) {
      const moves = pathTo(bad.state, bad.move);
      return { id: pid, holds: false, counterexample: moves, detail: describeViolation(pid, model, moves) };
    }
    return finished ? { id: pid, holds: true } : { id: pid, ...undecided };
  });

  const refuted = results.some((p) => p.holds === false);
  const result: ProofResult = {
    verdict: refuted ? "refuted" : finished ? "proved" : "unfinished",
    properties: results,
    stats: { states: nStates, ms: elapsed(), transitions, bytes: bytesUsed() },
  };
  if (stoppedBy) {
    result.reason = stoppedBy.reason;
    result.stoppedBy = stoppedBy.cause;
  }
  return result;
}

function describeViolation(pid: PropertyId, model: Model, moves: Move[]): string {
  const n = moves.length;
  switch (pid) {
    case "settles":
      return n === 0
        ? "the standing rules loop already when the rulebook starts"
        : `after ${n} moves the standing rules run more than 64 times in one settle (a rule loop)`;
    case "no-underflow":
      return n === 0 ? "the start already drives a counter below zero" : `the last of these ${n} moves drives a counter below zero`;
    case "no-conflicting-proceeds":
      return `after ${n} moves, signals of conflicting routes show proceed aspects at once`;
    case "one-train-per-section":
      return `after ${n} moves, two trains occupy the sections of the same or conflicting routes`;
    case "priority-unhindered":
      return `after ${n} moves a train on route ${model.routes[model.priority]?.id} waits at its signal at danger with the junction otherwise clear`;
    case "points-set-for-train":
      return `in the last of these ${n} moves a train passes its signal with the points lying for none of its routes`;
    case "points-locked":
      return `in the last of these ${n} moves power-worked points start to move under a train or a cleared signal`;
    case "no-stuck-train":
      return "";
  }
}
