/**
 * Alarm watchers as a pure function: committed pulses and state changes of one layout in,
 * alarms to raise or clear out. No I/O and no clock of their own (time comes with each
 * input), so they are tested as units and replayable; `watchRunner.ts` feeds them from the
 * live pipeline and calls the alarm service.
 *
 * What they watch (times are configurable, see `WatcherConfig`):
 * - **stuck**: a latch set, or a counter above 0, for longer than `stuckAfterMs` with no pulse
 *   on the detectors of its route in that time. A name belongs to the routes whose id it
 *   starts with (`mainApproach` → route `main`; `W1Approach` → the route(s) of signal W1);
 *   any other name (`junction`, `throat`) to every route. Cleared when it is reset.
 * - **detector-silent**: a detector D on a route's path (approach…, entry, exit…) saw no
 *   train while the next detector after it saw `silentAfterTrains` trains (they cannot get
 *   there without crossing D), or while the one before it saw one more than that (one train
 *   may still be waiting or in the section). Only neighbours with no other way in or out
 *   count (a shared exit also sees the other route's trains). Cleared by D's next pulse.
 * - **chatter**: two pulses on one detector closer than `chatterMinGapMs` (no wheelset
 *   follows another that closely: 40 ms at G scale). Cleared after `chatterQuietMs` without.
 * - **axle-mismatch**: pulses at a detector are grouped into trains (a gap over
 *   `trainGapMs` ends a train); each train counted at a detector is matched, in order, with
 *   the oldest unmatched train counted at the detector before it on a route; different
 *   counts raise the alarm for that pair. Cleared when a later train there matches.
 */
import type { AlarmKind } from "../../../shared/contract/live";

export interface WatcherConfig {
  stuckAfterMs: number;
  chatterMinGapMs: number;
  chatterQuietMs: number;
  trainGapMs: number;
  silentAfterTrains: number;
}

export const DEFAULT_WATCHER_CONFIG: WatcherConfig = {
  stuckAfterMs: 10 * 60_000,
  chatterMinGapMs: 40,
  chatterQuietMs: 60_000,
  trainGapMs: 4_000,
  silentAfterTrains: 2,
};

export interface WatchRoute {
  id: string;
  signal: string;
  approach: string[];
  entry: string;
  exit: string[];
}

export type WatchInput =
  | { type: "pulse"; detector: string; at: number }
  /** Latches and counters after a committed step (whole records or only the changed keys). */
  | { type: "state"; at: number; latches?: Record<string, boolean>; counters?: Record<string, number> }
  | { type: "tick"; at: number };

export interface AlarmAction {
  op: "raise" | "clear";
  kind: Extract<AlarmKind, "stuck" | "detector-silent" | "chatter" | "axle-mismatch">;
  subject: string;
  message: string;
}

interface OpenTrain {
  axles: number;
  first: number;
  last: number;
}
interface CountedTrain {
  axles: number;
  done: number;
}

export interface WatchState {
  clock: number;
  /** `latch:NAME` / `counter:NAME` → when it became set (absent when reset). */
  setSince: Record<string, number>;
  lastPulse: Record<string, number>;
  trains: Record<string, number>;
  /** Per detector: the train counts of the detectors next to it at its own last pulse. */
  marks: Record<string, Record<string, number>>;
  open: Record<string, OpenTrain>;
  counted: Record<string, CountedTrain[]>;
  lastChatter: Record<string, number>;
  /** Alarms this watcher has raised and not cleared: `kind|subject`. */
  raised: Record<string, string>;
}

export function createWatchState(): WatchState {
  return { clock: 0, setSince: {}, lastPulse: {}, trains: {}, marks: {}, open: {}, counted: {}, lastChatter: {}, raised: {} };
}

/** The detectors before and after each detector on the routes' paths. */
export interface RouteGraph {
  before: Record<string, string[]>;
  after: Record<string, string[]>;
  /** Detectors that end some path. */
  ends: Set<string>;
}

export function routeGraph(routes: WatchRoute[]): RouteGraph {
  const before: Record<string, string[]> = {};
  const after: Record<string, string[]> = {};
  const ends = new Set<string>();
  const add = (map: Record<string, string[]>, key: string, value: string) => {
    const list = (map[key] ??= []);
    if (!list.includes(value)) list.push(value);
  };
  for (const r of routes) {
    const path = [...r.approach, r.entry, ...r.exit];
    for (let i = 1; i < path.length; i++) {
      add(after, path[i - 1], path[i]);
      add(before, path[i], path[i - 1]);
    }
    ends.add(path[path.length - 1]);
  }
  return { before, after, ends };
}

/** Detectors whose pulses count as movement for a latch or counter (see the file comment). */
export function detectorsFor(name: string, routes: WatchRoute[]): string[] {
  const lower = name.toLowerCase();
  const own = routes.filter((r) => lower.startsWith(r.id.toLowerCase()) || lower.startsWith(r.signal.toLowerCase()));
  const chosen = own.length > 0 ? own : routes;
  return [...new Set(chosen.flatMap((r) => [...r.approach, r.entry, ...r.exit]))];
}

const fmtMs = (ms: number) => (ms % 60_000 === 0 ? `${ms / 60_000} min` : ms % 1000 === 0 ? `${ms / 1000} s` : `${ms} ms`);

/**
 * One input through the watchers. Returns the new state (the old one is not changed) and
 * the alarms to raise or clear, each at most once until its condition changes.
 */
export function watch(config: WatcherConfig, routes: WatchRoute[], graph: RouteGraph, previous: WatchState, input: WatchInput): { state: WatchState; actions: AlarmAction[] } {
  const s: WatchState = structuredClone(previous);
  const actions: AlarmAction[] = [];
  const raise = (kind: AlarmAction["kind"], subject: string, message: string) => {
    const key = `${kind}|${subject}`;
    if (s.raised[key] === message) return;
    s.raised[key] = message;
    actions.push({ op: "raise", kind, subject, message });
  };
  const clear = (kind: AlarmAction["kind"], subject: string) => {
    const key = `${kind}|${subject}`;
    if (!(key in s.raised)) return;
    const message = s.raised[key];
    delete s.raised[key];
    actions.push({ op: "clear", kind, subject, message });
  };
  s.clock = Math.max(s.clock, input.at);
  const now = s.clock;

  // Trains whose last axle is long enough ago are complete: count and match them, oldest first.
  const finishTrains = () => {
    const finished = Object.entries(s.open)
      .filter(([, t]) => now - t.last > config.trainGapMs)
      .sort((a, b) => a[1].last - b[1].last);
    for (const [detector, train] of finished) {
      delete s.open[detector];
      const done = train.last;
      const upstream = (graph.before[detector] ?? []).filter((d) => (s.counted[d]?.length ?? 0) > 0);
      if (upstream.length > 0) {
        const from = upstream.sort((a, b) => s.counted[a][0].done - s.counted[b][0].done)[0];
        const earlier = s.counted[from].shift()!;
        const subject = `${from}→${detector}`;
        if (earlier.axles !== train.axles) {
          raise("axle-mismatch", subject, `A train counted ${earlier.axles} axles at ${from} but ${train.axles} at ${detector}`);
        } else {
          clear("axle-mismatch", subject);
        }
      }
      if ((graph.after[detector] ?? []).length > 0) {
        const queue = (s.counted[detector] ??= []);
        queue.push({ axles: train.axles, done });
        // Trains that went elsewhere (or were never seen again) must not pile up.
        if (queue.length > 16) queue.shift();
      }
    }
  };

  if (input.type === "pulse") {
    const d = input.detector;
    finishTrains();
    const last = s.lastPulse[d];
    if (last !== undefined && input.at - last < config.chatterMinGapMs) {
      s.lastChatter[d] = input.at;
      raise("chatter", d, `Detector ${d} gave pulses ${input.at - last} ms apart (closer than ${config.chatterMinGapMs} ms): check it for a loose wire or a flickering beam`);
    }
    const open = s.open[d];
    if (open) {
      // A chattering pulse is not an axle: it would spoil the axle count.
      if (!(last !== undefined && input.at - last < config.chatterMinGapMs)) open.axles++;
      open.last = input.at;
    } else {
      s.open[d] = { axles: 1, first: input.at, last: input.at };
      s.trains[d] = (s.trains[d] ?? 0) + 1;
    }
    s.lastPulse[d] = input.at;
    const neighbours = [...(graph.before[d] ?? []), ...(graph.after[d] ?? [])];
    s.marks[d] = Object.fromEntries(neighbours.map((n) => [n, s.trains[n] ?? 0]));
    clear("detector-silent", d);

    // Did the trains at d pass a silent detector on the way?
    for (const other of graph.before[d] ?? []) checkSilent(other);
    for (const next of graph.after[d] ?? []) checkSilent(next);
  } else if (input.type === "state") {
    for (const [name, on] of Object.entries(input.latches ?? {})) mark(`latch:${name}`, on);
    for (const [name, n] of Object.entries(input.counters ?? {})) mark(`counter:${name}`, n > 0);
    finishTrains();
  } else {
    finishTrains();
  }

  // Stuck latches and counters.
  for (const [key, since] of Object.entries(s.setSince)) {
    const name = key.slice(key.indexOf(":") + 1);
    const what = key.startsWith("latch:") ? "Latch" : "Counter";
    const detectors = detectorsFor(name, routes);
    const moved = Math.max(since, ...detectors.map((d) => s.lastPulse[d] ?? -Infinity));
    if (now - moved >= config.stuckAfterMs) {
      raise("stuck", name, `${what} ${name} has been ${what === "Latch" ? "set" : "above 0"} for over ${fmtMs(config.stuckAfterMs)} with no pulse on ${detectors.join(", ") || "its route"}: is a train really there?`);
    }
  }
  for (const [d, at] of Object.entries(s.lastChatter)) {
    if (now - at >= config.chatterQuietMs) {
      delete s.lastChatter[d];
      clear("chatter", d);
    }
  }
  return { state: s, actions };

  function mark(key: string, on: boolean) {
    if (on && s.setSince[key] === undefined) s.setSince[key] = now;
    if (!on && s.setSince[key] !== undefined) {
      delete s.setSince[key];
      clear("stuck", key.slice(key.indexOf(":") + 1));
    }
  }

  function checkSilent(d: string) {
    const marks = s.marks[d] ?? {};
    const seen = (n: string) => (s.trains[n] ?? 0) - (marks[n] ?? 0);
    // Only a neighbour that trains can reach by no other way than d is a witness: a shared
    // exit (two routes merging) also sees the other route's trains.
    const downstream = (graph.after[d] ?? []).filter((n) => (graph.before[n] ?? []).length === 1 && seen(n) >= config.silentAfterTrains);
    // Trains seen before d must cross d, but one may still be waiting or in the section.
    const upstreamOfEnd = (graph.before[d] ?? []).filter((n) => (graph.after[n] ?? []).length === 1 && seen(n) >= config.silentAfterTrains + 1);
    const witness = downstream[0] ?? upstreamOfEnd[0];
    if (witness) raise("detector-silent", d, `Detector ${d} has seen no train while ${witness} next to it saw ${seen(witness)}: check ${d}`);
  }
}
