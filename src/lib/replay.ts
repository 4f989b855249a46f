/**
 * Pure helpers behind the replay player: running a session's recorded inputs through the
 * engine, starting a what-if run of another rulebook from the same moment, comparing the
 * two runs step by step, and pacing playback by the recorded times.
 */
import { initialState, shownAspects, type EngineInput, type EngineState } from "@shared/rulebook/engine";
import type { Rulebook } from "@shared/rulebook/schema";
import { formatTime } from "./duration";
import { applyInput, describeInput, type SimEntry } from "./simulation";

/**
 * The session's steps: its start state, then one entry per input. Labels give the input's event
 * number and clock time (as the event log shows them) and the time since the first input.
 */
export function runSession(rulebook: Rulebook, start: EngineState, inputs: readonly EngineInput[], eventIds?: readonly string[]): SimEntry[] {
  const origin = inputs[0]?.at ?? start.clock;
  const entries: SimEntry[] = [{ label: "Session start: the state the layout was in", input: null, state: start, changes: [] }];
  inputs.forEach((input, i) => {
    const entry = applyInput(rulebook, entries[entries.length - 1].state, input);
    // The clock time as the event log shows it, the time since the first input, and the log's event number.
    const when = `${formatTime(input.at)}, +${(Math.max(0, input.at - origin) / 1000).toFixed(1)} s`;
    const event = eventIds?.[i] ? `event #${eventIds[i]}: ` : "";
    entries.push({ ...entry, label: `${event}${describeInput(input, when)}` });
  });
  return entries;
}

/**
 * Where a what-if run of another rulebook starts: that rulebook's initial values at the
 * session's start time, overlaid with every latch, counter, selector value, wanted aspect,
 * hold and armed quiet trigger of the recorded start that the other rulebook also declares,
 * so a train already counted on the approach is still counted. The first step settles it.
 */
export function carryStartState(rulebook: Rulebook, recorded: EngineState): EngineState {
  const fresh = initialState(rulebook, recorded.clock);
  const pick = <V,>(into: Record<string, V>, from: Record<string, V>, keep: (name: string, value: V) => boolean = () => true) => {
    const out = { ...into };
    for (const [name, value] of Object.entries(from)) if (name in into && keep(name, value)) out[name] = value;
    return out;
  };
  const quietRules = new Set(rulebook.rules.filter((r) => typeof r.on === "object" && "quiet" in r.on).map((r) => r.id));
  const signals = new Set(Object.keys(fresh.wanted));
  return {
    ...fresh,
    latches: pick(fresh.latches, recorded.latches),
    counters: pick(fresh.counters, recorded.counters),
    selectors: pick(fresh.selectors, recorded.selectors, (name, value) => rulebook.selectors[name]?.values.includes(value) ?? false),
    wanted: pick(fresh.wanted, recorded.wanted),
    held: recorded.held.filter((signal) => signals.has(signal)),
    quiet: Object.fromEntries(Object.entries(recorded.quiet).filter(([rule]) => quietRules.has(rule))),
    faulted: null,
  };
}

/** One signal whose shown aspect differs between the recorded run and the what-if run. */
export interface SignalDifference {
  signal: string;
  /** "dark" where a run's rulebook does not know the signal. */
  recorded: string;
  whatIf: string;
}

export interface RunComparison {
  /** Per step index (0 = start), the signals that differ; steps with none are absent. */
  differences: Map<number, SignalDifference[]>;
  /** The first step index where any signal differs, or null when the runs agree throughout. */
  first: number | null;
  /** How many steps differ. */
  count: number;
}

/**
 * Compares the aspects shown after every step of two runs of the same inputs. Both runs must
 * have one entry per step (the start, then one per input).
 *
 * @example
 * const diff = compareRuns(v1, runSession(v1, start, inputs), draft, runSession(draft, carryStartState(draft, start), inputs));
 * diff.first; // e.g. 3: the third input is where the draft would show something else
 */
export function compareRuns(recordedRulebook: Rulebook, recorded: readonly SimEntry[], whatIfRulebook: Rulebook, whatIf: readonly SimEntry[]): RunComparison {
  if (recorded.length !== whatIf.length) throw new Error(`the runs have ${recorded.length} and ${whatIf.length} steps`);
  const differences = new Map<number, SignalDifference[]>();
  for (let i = 0; i < recorded.length; i++) {
    const a: Record<string, string> = shownAspects(recordedRulebook, recorded[i].state);
    const b: Record<string, string> = shownAspects(whatIfRulebook, whatIf[i].state);
    const diffs: SignalDifference[] = [];
    for (const signal of [...new Set([...Object.keys(a), ...Object.keys(b)])].sort()) {
      const left = a[signal] ?? "dark";
      const right = b[signal] ?? "dark";
      if (left !== right) diffs.push({ signal, recorded: left, whatIf: right });
    }
    if (diffs.length > 0) differences.set(i, diffs);
  }
  const first = differences.size > 0 ? Math.min(...differences.keys()) : null;
  return { differences, first, count: differences.size };
}

/** Playback speeds offered: 1× is the session's own pace. */
export const PLAYBACK_SPEEDS = [1, 10, 100] as const;
export type PlaybackSpeed = (typeof PLAYBACK_SPEEDS)[number];

/** A quiet spell in the session (a tea break) is shortened to this at any speed. */
export const MAX_PLAYBACK_WAIT_MS = 2_000;

/** How long playback waits on step `index` before showing the next, at `speed`. */
export function playbackDelayMs(entries: readonly SimEntry[], index: number, speed: PlaybackSpeed): number {
  const here = entries[index]?.input?.at;
  const next = entries[index + 1]?.input?.at;
  if (here === undefined || next === undefined) return 0;
  return Math.min(MAX_PLAYBACK_WAIT_MS, Math.max(0, (next - here) / speed));
}
