/**
 * The search: breadth first over (engine state, packed trains), each edge one move of the
 * environment (`environment.ts`; a fused arrival of the reduced environment is worth two). Each
 * state remembers the state and move it was reached by on a shortest path, so every refuted
 * property comes with a shortest counterexample.
 */
import type { Rulebook } from "../schema";
import { EngineStore, startState } from "./engineStore";
import {
  forEachMove,
  LAZY_ARRIVAL,
  LAZY_LENGTH,
  LAZY_SPLIT,
  MOVE_CHOICE_SHIFT,
  MOVE_SPLIT,
  MOVE_SPLIT_OPEN,
  moveCodes,
  MOVE_ARRIVAL,
  MOVE_FUSED,
  MOVE_GROUP_SHIFT,
  MOVE_MISROUTED,
  MOVE_REVEAL,
  MOVE_UNLOCKED,
  packing,
  PLAIN,
  remainingProgress,
  streamAxles,
  SLOT_AXLES,
  SLOT_OPEN,
  type Reduction,
} from "./environment";
import { deferrableGroups } from "./deferral";
import { compileModel, type Model, type PointsWorking } from "./model";
import { decodePath, type Move, type PathStep } from "./moves";
import { decodeSplitPath } from "./splitMoves";
import { judgeState, propertiesOf, type PropertyId } from "./properties";
import { findStuckTrain, splitKind, type Hidden, type StuckPass } from "./stuck";
import { IntVec, StateTable, vecFor } from "./stateTable";
import { TrainCodec } from "./trainCodec";

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
  stats: {
    states: number;
    ms: number;
    transitions: number;
    bytes: number;
    /** How `no-stuck-train` was decided, when it was (stuck.ts): one pass in progress order, or a worklist. */
    noStuckPass?: StuckPass;
    /** Groups whose stream axles waited until the group was ready (deferral.ts), when any did. */
    deferredGroups?: number;
  };
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
  /**
   * Explore the plain §5 environment, without the reductions (lazy arrival and lazy length,
   * environment.ts). Same verdicts and counterexample lengths, many more states: for cross-checks.
   */
  plain?: boolean;
  /** Decide `no-stuck-train` by the worklist even when the progress order would do (cross-checks). */
  stuckByWorklist?: boolean;
  /** Take every stream axle as it comes, deferring none (deferral.ts): same verdicts and lengths, for cross-checks. */
  noDeferral?: boolean;
}

/** No fixed state limit: memory and time decide (issue 16). Kept for callers that pass one on. */
export const DEFAULT_MAX_STATES = Number.POSITIVE_INFINITY;
/** The search's typed storage may grow to this (the JavaScript heap stays small beside it). */
export const DEFAULT_MAX_BYTES = 1536 * 1024 * 1024;
const PROGRESS_EVERY_STATES = 4096;

/** How many hidden-length bits `no-stuck-train` may track per state before lazy length is left off. */
const MAX_HIDDEN_BITS = 1024;

/** The environment a proof explores: plain §5, or reduced (the default; see environment.ts). */
export function reductionFor(model: Model, plain: boolean): Reduction {
  if (plain) return PLAIN;
  if (Math.pow(model.maxAxles, model.groups.length) > MAX_HIDDEN_BITS) return LAZY_ARRIVAL;
  // Lazy split keeps a stream's axles as a count: exact with one approach detector a group.
  return model.groups.every((g) => g.entryIndex === 1) ? LAZY_SPLIT : LAZY_LENGTH;
}

/**
 * Proves (or refutes) every §5 property of `rulebook` by exhaustive search.
 *
 * The verdict is "proved" only when the whole state space was explored and every property
 * holds; "refuted" when at least one property has a counterexample (properties not decided
 * before a limit have `holds: null`); otherwise "unfinished" with a `reason` and `stoppedBy`.
 *
 * The search is breadth first by the number of §5 moves: a fused arrival of the reduced
 * environment counts two, so the states are taken in buckets by depth (d, d+1, d+2) and a state
 * first found two moves on may later be found one move on (its depth, parent and move are then
 * replaced). Every state is expanded once, at its final depth, in order of depth; so the first
 * violation met of a state property, and the shortest of the transition ones, is shortest.
 */
export function prove(rulebook: Rulebook, options: ProveOptions = {}): ProofResult {
  const now = options.now;
  const started = now ? now() : 0;
  const { result, stuckUnsure } = search(rulebook, options);
  if (!stuckUnsure) return result;
  // Lazy split decides no-stuck-train only when it finds no stuck train (stuck.ts): ask the
  // lazy-length search, which tells every train apart, for the exact answer and counterexample.
  const spent = now ? now() - started : 0;
  const exact = search(rulebook, { ...options, maxMs: options.maxMs === undefined ? undefined : Math.max(0, options.maxMs - spent) }, LAZY_LENGTH).result;
  exact.stats.ms = now ? now() - started : 0;
  return exact;
}

function search(rulebook: Rulebook, options: ProveOptions, forced?: Reduction): { result: ProofResult; stuckUnsure: boolean } {
  const now = options.now;
  const started = now ? now() : 0;
  const elapsed = (): number => (now ? now() - started : 0);
  const maxStates = options.maxStates ?? DEFAULT_MAX_STATES;
  const maxBytes = options.maxBytes ?? DEFAULT_MAX_BYTES;

  let model: Model;
  try {
    model = compileModel(rulebook, options.points);
  } catch (err) {
    return {
      result: { verdict: "unfinished", properties: [], stats: { states: 0, ms: elapsed(), transitions: 0, bytes: 0 }, reason: (err as Error).message },
      stuckUnsure: false,
    };
  }
  const level = forced ?? reductionFor(model, options.plain === true);
  const lazyLength = level === LAZY_LENGTH || level === LAZY_SPLIT;
  const defer = level === LAZY_SPLIT && options.noDeferral !== true ? deferrableGroups(model) : 0;
  const properties = propertiesOf(model);
  const pack = packing(model);
  const codes = moveCodes(model);
  const engines = new EngineStore(model);
  const width = pack.width;

  const table = new StateTable(new TrainCodec(model, pack));
  // Per state id: parent, move code, depth (in §5 moves), state verdict bits, edge range.
  const parent = new IntVec(1 << 14);
  const moveOf = vecFor(codes.total, 1 << 14);
  const depthOf = new IntVec(1 << 14);
  const waitMaskOf = vecFor(2 ** model.groups.length - 1, 1 << 14);
  // Per state: remaining progress, then armed quiet triggers; every non-arrival edge lowers it
  // unless quiet rules or points go round in circles (stuck.ts orders its pass by it).
  // With lazy split, first the axles in streams (a split takes some out; only the stream's own
  // next axle, which is not an edge here, puts one in).
  const quietSpan = model.quietRuleIds.length + 1;
  const longestPath = Math.max(...model.routes.map((r) => r.path.length));
  const progressSpan = model.groups.length * model.maxTrains * model.maxAxles * longestPath + 1;
  const orderOf = vecFor((model.groups.length * model.maxTrains * model.maxAxles + 1) * progressSpan * quietSpan, 1 << 14);
  // Non-arrival edges, grouped by source: the first and the number of each state's, then per edge
  // its target and kind (0, or 1 + g for an edge that reveals an axle in group g).
  const edgeStart = new IntVec(1 << 14);
  const edgeCount = vecFor(codes.total, 1 << 14);
  const edgeTo = new IntVec(1 << 16);
  const edgeKind = vecFor(splitKind(model.groups.length, model.groups.length - 1, model.widestGroup - 1, true), 1 << 16);
  // States waiting to be expanded, by depth modulo 3 (moves are worth one or two).
  const buckets = [new IntVec(1 << 12), new IntVec(1 << 12), new IntVec(1 << 12)];
  const bytesUsed = (): number =>
    table.bytes +
    [parent, moveOf, depthOf, waitMaskOf, orderOf, edgeStart, edgeCount, edgeTo, edgeKind, ...buckets].reduce((sum, v) => sum + v.bytes, 0) +
    engines.bytes;
  let transitions = 0;

  // Shortest violation of each property: a state, or for a violating move, the state it leaves and the move.
  const firstBad = new Map<PropertyId, { length: number; state: number; move?: number }>();
  const noteBad = (pid: PropertyId, length: number, state: number, move?: number): void => {
    const known = firstBad.get(pid);
    if (!known || length < known.length) firstBad.set(pid, move === undefined ? { length, state } : { length, state, move });
  };
  let stuckCandidates = 0;

  const examine = (id: number, engine: number, v: Uint8Array, depth: number): void => {
    const facts = engines.facts[engine];
    const verdict = judgeState(model, pack, facts, v);
    waitMaskOf.put(id, verdict.waitMask);
    orderOf.put(id, (streamAxles(pack, v) * progressSpan + remainingProgress(model, pack, v)) * quietSpan + facts.armed.length);
    if (verdict.waitMask !== 0) stuckCandidates++;
    if (facts.faulted) noteBad("settles", depth, id);
    if (facts.conflictingProceeds) noteBad("no-conflicting-proceeds", depth, id);
    if (verdict.overlap) noteBad("one-train-per-section", depth, id);
    if (verdict.priorityHindered && model.priority >= 0) noteBad("priority-unhindered", depth, id);
  };

  const cur = new Uint8Array(width);
  const nxt = new Uint8Array(width);
  const begin = startState(model);
  const startEngine = engines.intern(begin.state);
  table.findOrAdd(startEngine, cur);
  parent.put(0, -1);
  depthOf.put(0, 0);
  buckets[0].push(0);
  // The first settle (or a first points report) can itself drive a counter below zero.
  if (begin.underflow) noteBad("no-underflow", 0, 0);

  let currentId = 0;
  let currentEngine = 0;
  let currentDepth = 0;
  // Local copies: imported bindings are read through getters by some loaders, on the hot path.
  const FUSED = MOVE_FUSED;
  const MISROUTED = MOVE_MISROUTED;
  const UNLOCKED = MOVE_UNLOCKED;
  const ARRIVAL = MOVE_ARRIVAL;
  const REVEAL = MOVE_REVEAL;
  const GROUP_SHIFT = MOVE_GROUP_SHIFT;
  const CHOICE_SHIFT = MOVE_CHOICE_SHIFT;
  const SPLIT = MOVE_SPLIT;
  const SPLIT_OPEN = MOVE_SPLIT_OPEN;
  const groupCount = model.groups.length;
  const { pulseBase, quietBase } = codes;
  const maxAxles = model.maxAxles;
  const pulsesPerGroup = model.maxTrains * model.maxAxles * codes.choices;
  const visit = (code: number, input: number, flags: number): void => {
    transitions++;
    const length = currentDepth + ((flags & FUSED) !== 0 ? 2 : 1);
    if ((flags & MISROUTED) !== 0) {
      noteBad("points-set-for-train", length, currentId, code);
      return;
    }
    if ((flags & UNLOCKED) !== 0) noteBad("points-locked", length, currentId, code);
    let engine = currentEngine;
    if (input >= 0) {
      engine = engines.after(currentEngine, input);
      if (engines.underflows(currentEngine, input)) noteBad("no-underflow", length, currentId, code);
    }
    const before = table.size;
    // Only the group that moved changed its trains (none for quiet firings and points).
    const moved = code < pulseBase ? (code / maxAxles) | 0 : code < quietBase ? ((code - pulseBase) / pulsesPerGroup) | 0 : -1;
    const id = table.findOrAddNear(engine, nxt, currentId, moved);
    if (table.size > before || depthOf.data[id] > length) {
      parent.put(id, currentId);
      moveOf.put(id, code);
      depthOf.put(id, length);
      buckets[length % 3].push(id);
    }
    if ((flags & ARRIVAL) === 0) {
      edgeTo.push(id);
      const group = (flags >>> GROUP_SHIFT) & 0xff;
      edgeKind.push(
        (flags & SPLIT) !== 0
          ? splitKind(groupCount, group, flags >>> CHOICE_SHIFT, (flags & SPLIT_OPEN) !== 0)
          : (flags & REVEAL) !== 0
            ? 1 + group
            : 0,
      );
    }
  };

  let stoppedBy: { cause: StopCause; reason: string } | undefined;
  let expanded = 0;
  search: for (let depth = 0; ; depth++) {
    const bucket = buckets[depth % 3];
    if (bucket.length === 0 && buckets[(depth + 1) % 3].length === 0 && buckets[(depth + 2) % 3].length === 0) break;
    for (let i = 0; i < bucket.length; i++) {
      const id = bucket.data[i];
      // Found again one move shorter after it was queued here: expanded from the shorter bucket.
      if (depthOf.data[id] !== depth) continue;
      if (expanded % PROGRESS_EVERY_STATES === 0 && expanded > 0) {
        options.onProgress?.({ states: table.size, frontier: table.size - expanded, depth });
        if (options.shouldCancel?.()) {
          stoppedBy = { cause: "cancelled", reason: "cancelled" };
          break search;
        }
        if (options.maxMs !== undefined && now && elapsed() > options.maxMs) {
          stoppedBy = { cause: "time", reason: `time limit of ${options.maxMs} ms reached after ${table.size} states` };
          break search;
        }
        if (bytesUsed() > maxBytes) {
          stoppedBy = { cause: "memory", reason: `memory limit of ${Math.round(maxBytes / 1048576)} MB reached after ${table.size} states` };
          break search;
        }
      }
      if (table.size >= maxStates) {
        stoppedBy = { cause: "states", reason: `state limit of ${maxStates} reached` };
        break search;
      }
      expanded++;
      currentId = id;
      currentDepth = depth;
      currentEngine = table.engine[id];
      table.load(id, cur);
      examine(id, currentEngine, cur, depth);
      edgeStart.put(id, edgeTo.length);
      forEachMove(model, pack, codes, engines.facts[currentEngine], cur, nxt, visit, level, defer);
      edgeCount.put(id, edgeTo.length - edgeStart.data[id]);
    }
    bucket.clear();
  }

  const finished = stoppedBy === undefined;
  const nStates = table.size;

  let stuck: { state: number; group: number; extra: number[] } | undefined;
  let stuckPass: StuckPass | undefined;
  if (finished && stuckCandidates > 0) {
    const hidden: Hidden = {
      base: lazyLength ? model.maxAxles : 1,
      groups: model.groups.length,
      words: lazyLength ? Math.ceil(Math.pow(model.maxAxles, model.groups.length) / 32) : 1,
      openOf: (state, out) => {
        const v = table.load(state, cur);
        for (const group of model.groups) {
          out[group.index] = 0;
          const b = pack.base[group.index];
          for (let t = 0; t < v[b]; t++) {
            const slot = b + 1 + t * pack.slotWidth;
            if (v[slot + SLOT_OPEN] !== 0) out[group.index] = v[slot + SLOT_AXLES];
          }
        }
      },
    };
    const edges = { start: edgeStart.data, count: edgeCount.data, to: edgeTo.data, kind: edgeKind.data, total: edgeTo.length };
    ({ stuck, pass: stuckPass } = findStuckTrain({
      model,
      nStates,
      proceedMaskOf: (s) => engines.facts[table.engine[s]].proceedMask,
      waitMaskOf,
      depthOf,
      edges,
      hidden,
      order: options.stuckByWorklist ? undefined : orderOf.data,
    }));
  }

  const stuckUnsure = level === LAZY_SPLIT && (stuck !== undefined || stuckPass === "unsupported");
  if (stuckUnsure) return { result: { verdict: "unfinished", properties: [], stats: { states: nStates, ms: elapsed(), transitions, bytes: bytesUsed() } }, stuckUnsure };

  /** The moves from the start to `state`, then `lastMove` (if any). */
  const pathTo = (state: number, lastMove?: number, extra: number[] = []): Move[] => {
    const chain: number[] = [];
    for (let s = state; s >= 0; s = parent.data[s]) chain.push(s);
    chain.reverse();
    const steps: PathStep[] = [];
    for (let i = 0; i < chain.length; i++) {
      const s = chain[i];
      const code = i + 1 < chain.length ? moveOf.data[chain[i + 1]] : lastMove;
      if (code === undefined) break;
      steps.push({ facts: engines.facts[table.engine[s]], trains: table.load(s, new Uint8Array(width)), code });
    }
    if (level === LAZY_SPLIT) return decodeSplitPath(model, pack, codes, steps);
    return decodePath(model, pack, codes, steps, level, (g) => extra[g] ?? 0);
  };
  const undecided = { holds: null, detail: "not decided: the search did not finish" } as const;
  const results: PropertyResult[] = properties.map((pid) => {
    if (pid === "no-stuck-train") {
      if (stuck) {
        const group = model.groups[stuck.group];
        return {
          id: pid,
          holds: false,
          counterexample: pathTo(stuck.state, undefined, stuck.extra),
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
  if (stuckPass) result.stats.noStuckPass = stuckPass;
  if (defer !== 0) result.stats.deferredGroups = bitCount(defer);
  if (stoppedBy) {
    result.reason = stoppedBy.reason;
    result.stoppedBy = stoppedBy.cause;
  }
  return { result, stuckUnsure: false };
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

function bitCount(mask: number): number {
  let n = 0;
  for (let m = mask; m !== 0; m &= m - 1) n++;
  return n;
}
