/**
 * Replay of a counterexample through the real engine with real times, showing after each move
 * the state, the changes, the shown aspects, the trains and which properties are visibly broken.
 * Each given move is matched against the moves `forEachMove` offers in that state, so a replay
 * that completes is a run the prover explored.
 */
import { initialStep, shownAspects, step, type Change, type EngineInput, type EngineState } from "../engine";
import type { Aspect, Rulebook } from "../schema";
import { engineFacts, isUnderflowChange, normalise } from "./abstraction";
import { forEachMove, moveCodes, MOVE_MISROUTED, MOVE_UNLOCKED, packing, SLOT_ROUTE } from "./environment";
import { compileModel, type Model, type PointsWorking } from "./model";
import { describeMove, TrainNumbers, type Move } from "./moves";
import { judgeState, slotPositions, type PropertyId } from "./properties";

/** Where the trains are during a replay: one entry per train, with its axles' progress. */
export interface TrainView {
  train: number;
  /** The train's route, or its facing group's first route until its route is fixed. */
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
  /** The state after the start: initial values, settle, and the first points reports. */
  initial: EngineState;
  /** The points reports sent before the first move (when points are modelled). */
  startInputs: EngineInput[];
  /** Properties broken by the start state itself (e.g. a rule loop while starting). */
  initialViolates: PropertyId[];
  steps: ReplayStep[];
}

function trainViews(model: Model, cur: Uint8Array, numbers: TrainNumbers): TrainView[] {
  const pack = packing(model);
  const out: TrainView[] = [];
  for (const group of model.groups) {
    for (let t = 0; t < cur[pack.base[group.index]]; t++) {
      const slot = pack.base[group.index] + 1 + t * pack.slotWidth;
      const tag = cur[slot + SLOT_ROUTE];
      const crossed = slotPositions(cur, slot);
      out.push({ train: numbers.of(group.index, t), route: model.routes[group.routes[Math.max(0, tag - 1)]].id, axles: crossed.length, crossed });
    }
  }
  return out.sort((a, b) => a.train - b.train);
}

/**
 * Turns a counterexample into engine inputs and runs them through `step` from the rulebook's
 * start. Inputs get real times: pulses and points reports 1 ms apart while no armed quiet trigger
 * is due; a quiet firing becomes a tick at its trigger's deadline. Throws if a move is not
 * possible in that state (for example an axle crossing entry at danger).
 *
 * "no-stuck-train" shows as visibly broken whenever a train waits at a danger signal; that
 * the wait lasts for ever is what the prover established, not something one run can show.
 */
export function replayCounterexample(rulebook: Rulebook, moves: Move[], options: { points?: PointsWorking } = {}): Replay {
  const model = compileModel(rulebook, options.points);
  const pack = packing(model);
  const codes = moveCodes(model);
  const start = initialStep(rulebook, 0);
  let state = start.state;
  const startInputs: EngineInput[] = [];
  let startChanges = start.changes;
  for (const p of model.points) {
    const input: EngineInput = { type: "points", points: p.id, lies: "normal", at: 0 };
    startInputs.push(input);
    const r = step(rulebook, state, input);
    state = r.state;
    startChanges = [...startChanges, ...r.changes];
  }
  const initial = state;
  let cur: Uint8Array = new Uint8Array(pack.width);
  let numbers = new TrainNumbers(model);

  const violations = (changes: Change[], flags: number): PropertyId[] => {
    const facts = engineFacts(model, normalise(state));
    const verdict = judgeState(model, pack, facts, cur);
    const out: PropertyId[] = [];
    if (facts.faulted) out.push("settles");
    if (changes.some(isUnderflowChange)) out.push("no-underflow");
    if (facts.conflictingProceeds) out.push("no-conflicting-proceeds");
    if (verdict.overlap) out.push("one-train-per-section");
    if (verdict.waitMask !== 0) out.push("no-stuck-train");
    if (verdict.priorityHindered) out.push("priority-unhindered");
    if (flags & MOVE_MISROUTED) out.push("points-set-for-train");
    if (flags & MOVE_UNLOCKED) out.push("points-locked");
    return out;
  };
  const initialViolates = violations(startChanges, 0).filter((p) => p !== "no-stuck-train");
  const nextAt = (): number => {
    const deadlines = Object.values(state.quiet);
    const soonest = deadlines.length ? Math.min(...deadlines) : Infinity;
    return state.clock + 1 < soonest ? state.clock + 1 : state.clock;
  };

  const steps = moves.map((move, index): ReplayStep => {
    const where = `move ${index + 1} (${JSON.stringify(move)})`;
    const facts = engineFacts(model, normalise(state));
    const nxt = new Uint8Array(pack.width);
    const offered: { code: number; flags: number }[] = [];
    forEachMove(model, pack, codes, facts, cur, nxt, (code, _input, flags) => offered.push({ code, flags }));
    const wanted = JSON.stringify(move);
    let chosen: { flags: number; after: Uint8Array; numbers: TrainNumbers } | undefined;
    for (const o of offered) {
      const trial = numbers.clone();
      const described = describeMove(model, pack, codes, { facts, trains: cur, code: o.code }, trial);
      if (JSON.stringify(described.move) === wanted) {
        chosen = { flags: o.flags, after: described.after, numbers: trial };
        break;
      }
    }
    if (!chosen) throw new Error(`${where}: not a move the environment can make now (${move.type === "pulse" ? "no axle of that train may cross that detector now" : "not offered in this state"})`);
    let input: EngineInput | null = null;
    let timed = true;
    let changes: Change[] = [];
    if (move.type === "pulse") {
      input = { type: "pulse", detector: move.detector, at: nextAt() };
      ({ state, changes } = step(rulebook, state, input));
    } else if (move.type === "points") {
      input = { type: "points", points: move.points, lies: move.lies, at: nextAt() };
      ({ state, changes } = step(rulebook, state, input));
    } else if (move.type === "quiet") {
      const deadline = state.quiet[move.rule];
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
    cur = chosen.after;
    numbers = chosen.numbers;
    return {
      move,
      input,
      timed,
      state,
      changes,
      shown: shownAspects(rulebook, state),
      trains: trainViews(model, cur, numbers),
      violates: violations(changes, chosen.flags),
    };
  });
  return { initial, startInputs, initialViolates, steps };
}
