/**
 * How the prover feeds the real `step` function, and what it needs to know about an engine
 * state. The prover does not trust timing (§5): it keeps *which* quiet triggers are armed and
 * forgets *when* (docs/prover.md, "The abstraction of time").
 */
import { ENGINE_ALARM } from "../engineAlarms";
import { shownAspects, step, type Change, type EngineState } from "../engine";
import type { Aspect } from "../schema";
import { LIE_CODE, REPORTED_LIES, type AbstractInput, type Model } from "./model";

/** Deadlines of armed quiet triggers are parked here between moves, so none fires unless chosen. */
const PARKED_DEADLINE = Number.MAX_SAFE_INTEGER;

/** The engine state with the clock taken out: clock 0, every armed deadline parked. */
export function normalise(s: EngineState): EngineState {
  const quiet: Record<string, number> = {};
  for (const id of Object.keys(s.quiet).sort()) quiet[id] = PARKED_DEADLINE;
  return { ...s, clock: 0, quiet, faulted: s.faulted ? { ...s.faulted, at: 0 } : null };
}

/**
 * Runs one abstract input through the real `step`. A pulse or points report happens at the
 * current clock, so no parked trigger fires; a quiet firing brings only that trigger's deadline
 * to the clock and ticks, so the engine fires exactly it (then settles), as §4 step 1 says.
 */
export function runInput(model: Model, s: EngineState, input: AbstractInput): { state: EngineState; changes: Change[] } {
  const rulebook = model.rulebook;
  switch (input.kind) {
    case "pulse":
      return step(rulebook, s, { type: "pulse", detector: input.detector, at: s.clock });
    case "points":
      return step(rulebook, s, { type: "points", points: input.points, lies: input.lies, at: s.clock });
    case "quiet":
      return step(rulebook, { ...s, quiet: { ...s.quiet, [input.rule]: s.clock } }, { type: "tick", at: s.clock });
  }
}

/** Is this change the engine's count-underflow alarm (not a rule's own `alarm` action)? See engine.ts. */
export function isUnderflowChange(c: Change): boolean {
  return c.kind === "alarm" && c.to === ENGINE_ALARM.countUnderflow;
}

/** A canonical text for an engine state: equal text ⇔ equal state (keys sorted at every level). */
export function canonical(value: unknown): string {
  if (value === null || typeof value !== "object") return JSON.stringify(value) ?? "undefined";
  if (Array.isArray(value)) return `[${value.map(canonical).join(",")}]`;
  const obj = value as Record<string, unknown>;
  return `{${Object.keys(obj)
    .sort()
    .filter((k) => obj[k] !== undefined)
    .map((k) => `${JSON.stringify(k)}:${canonical(obj[k])}`)
    .join(",")}}`;
}

/** What the environment and the properties need to know about one engine state. */
export interface EngineFacts {
  /** Bit r set: route r's signal shows something other than danger. */
  proceedMask: number;
  faulted: boolean;
  conflictingProceeds: boolean;
  /** Input indices of the armed quiet triggers (none while faulted: no quiet trigger fires then). */
  armed: number[];
  /** Bit r set: every points route r needs lie as it needs them (as last reported). */
  routesSetMask: number;
  /** LIE_CODE of each modelled points as last reported. */
  lies: number[];
  /**
   * Moves of power-worked points the rules allow: towards where last thrown (`moving` first;
   * from `moving` straight to the current target). `starting` marks the move off a still position.
   */
  powerMoves: { points: number; input: number; starting: boolean }[];
  /** Moves of hand-worked points if nothing under them forbids it: still → moving; moving → either. */
  handMoves: { points: number; input: number }[];
}

export function engineFacts(model: Model, state: EngineState): EngineFacts {
  const shown: Record<string, Aspect> = shownAspects(model.rulebook, state);
  let proceedMask = 0;
  for (const r of model.routes) if ((shown[r.signal] ?? "danger") !== "danger") proceedMask |= 1 << r.index;
  const conflictingProceeds = model.signalConflicts.some(([a, b]) => (proceedMask & (1 << a)) !== 0 && (proceedMask & (1 << b)) !== 0);
  const faulted = state.faulted !== null && state.faulted !== undefined;
  const armed = faulted
    ? []
    : Object.keys(state.quiet)
        .map((rule) => model.quietInput.get(rule))
        .filter((i): i is number => i !== undefined)
        .sort((x, y) => x - y);
  const lies = model.points.map((p) => LIE_CODE[state.points?.[p.id] ?? "unknown"]);
  let routesSetMask = 0;
  for (const r of model.routes) if (r.needs.every((n) => lies[n.points] === n.lies)) routesSetMask |= 1 << r.index;
  const powerMoves: EngineFacts["powerMoves"] = [];
  const handMoves: EngineFacts["handMoves"] = [];
  const input = (p: number, code: number): number => model.pointsBase + 3 * p + REPORTED_LIES.indexOf(REPORTED_LIES[code - 1]);
  for (const p of model.points) {
    const now = lies[p.index];
    if (p.worked === "power") {
      const target = state.thrown?.[p.id];
      if (target === undefined || now === LIE_CODE[target]) continue;
      if (now === LIE_CODE.moving) powerMoves.push({ points: p.index, input: input(p.index, LIE_CODE[target]), starting: false });
      else powerMoves.push({ points: p.index, input: input(p.index, LIE_CODE.moving), starting: true });
    } else if (now === LIE_CODE.moving) {
      handMoves.push({ points: p.index, input: input(p.index, LIE_CODE.normal) }, { points: p.index, input: input(p.index, LIE_CODE.reverse) });
    } else {
      handMoves.push({ points: p.index, input: input(p.index, LIE_CODE.moving) });
    }
  }
  return { proceedMask, faulted, conflictingProceeds, armed, routesSetMask, lies, powerMoves, handMoves };
}
