/**
 * What one engine step changed (engine.ts), as a union discriminated by `kind`: each kind says
 * what its `from` and `to` hold, so code that reads a change switches on `kind` and gets the
 * value types with it (and a new kind is a compile error wherever a switch ends in
 * `unreachable`). The wire form is the same object (`ChangeDto` in shared/contract/live.ts).
 */
import type { EngineAlarmCode } from "./engineAlarms";
import type { Aspect, PointsConditionLie, PointsLie, PointsPosition } from "./schema";

/** The fault a rule loop leaves: why, and the clock (ms) when it happened. */
export interface EngineFault {
  reason: string;
  at: number;
}

/**
 * `from` → `to` per kind. `points`: a report recorded where points lie (from `unknown` before the
 * first). `throw`: the rules threw power-worked points (from = where last thrown, or null): the
 * effect a live runner publishes on `…/points/{id}/set`. `quiet`: a deadline (ms) armed or
 * disarmed (null). `alarm`: no state changes; `to` is the engine's alarm code.
 */
interface ChangeValues {
  latch: { from: boolean; to: boolean };
  counter: { from: number; to: number };
  selector: { from: string; to: string };
  wanted: { from: Aspect; to: Aspect };
  shown: { from: Aspect; to: Aspect };
  held: { from: boolean; to: boolean };
  quiet: { from: number | null; to: number | null };
  fault: { from: EngineFault | null; to: EngineFault | null };
  alarm: { from: null; to: EngineAlarmCode };
  points: { from: PointsConditionLie; to: PointsLie };
  throw: { from: PointsPosition | null; to: PointsPosition };
}

export type ChangeKind = keyof ChangeValues;

export const CHANGE_KINDS = ["latch", "counter", "selector", "wanted", "held", "quiet", "fault", "alarm", "shown", "points", "throw"] as const satisfies readonly ChangeKind[];
// Every kind is listed: a kind missing from CHANGE_KINDS makes this `false` and fails to compile.
const _everyKindListed: ChangeKind extends (typeof CHANGE_KINDS)[number] ? true : false = true;

/** The change of one kind, e.g. `ChangeOf<"counter">` has numeric `from` and `to`. */
export type ChangeOf<K extends ChangeKind> = {
  kind: K;
  /** What changed: a latch, counter, selector, signal, points or rule id, or `"rulebook"`. */
  name: string;
  /** The rule that made the change. */
  rule?: string;
  /** The signaller command that made the change. */
  command?: string;
  /** Alarm text, a command's reason, etc. */
  detail?: string;
} & ChangeValues[K];

export type Change = { [K in ChangeKind]: ChangeOf<K> }[ChangeKind];
