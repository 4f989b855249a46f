/**
 * Alarm watchers of one layout: committed pulses, node status and latch/counter changes in,
 * alarms to raise, repeat or clear out. No I/O and no clock of their own (time comes with
 * each input), so they are tested as units and replayable; `watchRunner.ts` feeds them from
 * the live pipeline and hands their answers to the alarm writer.
 *
 * Cost: every input does a constant amount of work for a given layout (its neighbours on the
 * route graph, the latches that watch its detector), never a pass over the whole state. The
 * "nothing happened for N" cases keep their subjects in Maps in the order of their deadlines
 * (a deadline is always "last seen + one fixed limit", and last-seen times only grow), so an
 * input looks only at the front of each, and `nextDeadline()` tells the runner when to tick.
 *
 * Time: `at` is the server's clock (receipt time); the gap between two pulses on one
 * detector comes from the board's own clock (`t` of the same boot) when both pulses carry
 * one, so a server that received a burst late cannot make pulses look closer than they were.
 *
 * What they watch (thresholds in `WatcherSettings`):
 * - **stuck**: a latch set, or a counter above 0, for longer than `stuckAfterMs` with no pulse
 *   on the detectors of its route in that time. A name belongs to the routes whose id it
 *   starts with (`mainApproach` → route `main`; `W1Approach` → the route(s) of signal W1);
 *   any other name (`junction`, `throat`) to every route. Cleared when it is reset.
 * - **detector-silent**: a detector D on a route's path (approach…, entry, exit…) saw no
 *   train while the next detector after it saw `silentAfterTrains` trains (they cannot get
 *   there without crossing D), or while the one before it saw one more than that (one train
 *   may still be waiting or in the section). Only neighbours with no other way in or out
 *   count (a shared exit also sees the other route's trains). Cleared by D's next pulse.
 * - **chatter**: two pulses on one detector closer than `chatterMinGapMs`. Cleared after
 *   `chatterQuietMs` without.
 * - **axle-mismatch**: pulses at a detector are grouped into trains (a gap over `trainGapMs`
 *   ends a train); each train counted at a detector is matched, in order, with the oldest
 *   unmatched train counted at the detector before it on a route; counts further apart than
 *   `axleMismatchTolerance` raise the alarm for that pair. Cleared when a later train matches.
 * - **node-offline**: a node that said it went offline and stayed so `nodeOfflineAfterMs`.
 *   Cleared when it is back.
 *
 * An alarm is open at most once per kind + subject. Another occurrence while it is open is a
 * `repeat` (the writer adds it to the alarm's count and "last seen"): every chattering pulse
 * and every mismatched train; a silent detector when the count of trains it missed grows.
 */
import { ALARM_KIND } from "@shared/contract/alarmKinds";
import { DEFAULT_WATCHER_SETTINGS, type WatcherSettings } from "./watcherSettings";

export interface WatchRoute {
  id: string;
  signal: string;
  approach: string[];
  entry: string;
  exit: string[];
}

/** A pulse's time on its board's clock: `clock` names the clock (node and boot), `t` ms since boot. */
export interface BoardTime {
  clock: string;
  t: number;
}

export type WatchInput =
  | { type: "pulse"; detector: string; at: number; board?: BoardTime }
  /** Latches and counters after a committed step (whole records or only the changed keys). */
  | { type: "state"; at: number; latches?: Record<string, boolean>; counters?: Record<string, number> }
  | { type: "node"; at: number; node: string; online: boolean }
  | { type: "tick"; at: number };

export type WatchedKind = (typeof ALARM_KIND)["stuck" | "detectorSilent" | "chatter" | "axleMismatch" | "nodeOffline"];

export interface AlarmAction {
  /** `raise`: newly open; `repeat`: happened again while open (count + 1); `clear`: gone. */
  op: "raise" | "repeat" | "clear";
  kind: WatchedKind;
  subject: string;
  message: string;
  /** Server time of the input that caused it. */
  at: number;
}

/** When an open alarm happens again: on every occurrence, only when its figures change, or never. */
export type RepeatRule = "always" | "changed" | "never";
export const REPEAT_RULES: Record<WatchedKind, RepeatRule> = {
  [ALARM_KIND.chatter]: "always",
  [ALARM_KIND.axleMismatch]: "always",
  [ALARM_KIND.detectorSilent]: "changed",
  [ALARM_KIND.stuck]: "never",
  [ALARM_KIND.nodeOffline]: "never",
};

/** Trains counted at a detector and not yet matched downstream, at most this many. */
export const COUNTED_TRAINS_KEPT = 16;

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

export const fmtMs = (ms: number) => (ms % 60_000 === 0 && ms > 0 ? `${ms / 60_000} min` : ms % 1000 === 0 && ms > 0 ? `${ms / 1000} s` : `${ms} ms`);

/** The gap between two pulses on one detector: on the board's clock when both have the same one. */
export function pulseGapMs(prev: { at: number; board?: BoardTime }, at: number, board?: BoardTime): number {
  if (board && prev.board && prev.board.clock === board.clock && board.t >= prev.board.t) return board.t - prev.board.t;
  return at - prev.at;
}

/** The wording of each alarm, shared with the reference implementation in the tests. */
export const alarmText = {
  stuck: (name: string, isLatch: boolean, limitMs: number, detectors: string[]) =>
    `${isLatch ? "Latch" : "Counter"} ${name} has been ${isLatch ? "set" : "above 0"} for over ${fmtMs(limitMs)} with no pulse on ${detectors.join(", ") || "its route"}: is a train really there?`,
  chatter: (d: string, gapMs: number, minGapMs: number) =>
    `Detector ${d} gave pulses closer than ${minGapMs} ms apart (last seen ${gapMs} ms apart): check it for a loose wire or a flickering beam`,
  axleMismatch: (from: string, fromAxles: number, to: string, toAxles: number) => `A train counted ${fromAxles} axles at ${from} but ${toAxles} at ${to}`,
  silent: (d: string, witness: string, seen: number) => `Detector ${d} gave no pulse while ${witness} next to it counted ${seen} trains since ${d}'s last pulse: check ${d}`,
  nodeOffline: (node: string, afterMs: number) => (afterMs > 0 ? `Node ${node} has been offline for over ${fmtMs(afterMs)}` : `Node ${node} went offline`),
};

interface OpenTrain {
  axles: number;
  last: number;
}
interface CountedTrain {
  axles: number;
  done: number;
}

const keyOf = (kind: WatchedKind, subject: string) => `${kind}|${subject}`;
const isLatchKey = (key: string) => key.startsWith("latch:");
const nameOfKey = (key: string) => key.slice(key.indexOf(":") + 1);

/** Moves `key` to the back of an insertion-ordered Map (its deadline is now the latest). */
function touch<K, V>(map: Map<K, V>, key: K, value: V): void {
  map.delete(key);
  map.set(key, value);
}
function front<K, V>(map: Map<K, V>): [K, V] | undefined {
  for (const entry of map) return entry;
  return undefined;
}

export class AlarmWatcher {
  private settings: WatcherSettings;
  private readonly graph: RouteGraph;
  private readonly detectorsOfName = new Map<string, string[]>();
  private clock = 0;
  private readonly lastPulse = new Map<string, { at: number; board?: BoardTime }>();
  private readonly trains = new Map<string, number>();
  /** Per detector: the train counts of its neighbours at its own last pulse. */
  private readonly marks = new Map<string, Map<string, number>>();
  /** Open trains in the order of their last axle (oldest first). */
  private readonly open = new Map<string, OpenTrain>();
  private readonly counted = new Map<string, CountedTrain[]>();
  /** Detectors with open chatter, in the order of their last chattering pulse. */
  private readonly chatterSeen = new Map<string, number>();
  /** `latch:NAME` / `counter:NAME` → when it became set. */
  private readonly setSince = new Map<string, number>();
  /** Set keys not yet raised as stuck, in the order of their last movement. */
  private readonly stuckDue = new Map<string, number>();
  /** Detector → the set keys its pulses count as movement for. */
  private readonly keysOfDetector = new Map<string, Set<string>>();
  /** Nodes offline and not yet raised, in the order they went offline. */
  private readonly offlineDue = new Map<string, number>();
  /** Open alarms: `kind|subject` → their latest message. */
  private readonly raised = new Map<string, string>();
  private actions: AlarmAction[] = [];

  constructor(
    private readonly routes: WatchRoute[],
    settings: WatcherSettings = DEFAULT_WATCHER_SETTINGS,
  ) {
    this.settings = { ...settings };
    this.graph = routeGraph(routes);
  }

  /** New thresholds from now on; what is already waiting keeps its place (the order holds). */
  setSettings(settings: WatcherSettings): void {
    this.settings = { ...settings };
  }

  getSettings(): WatcherSettings {
    return { ...this.settings };
  }

  /** Open alarms as this watcher sees them (`kind|subject`). */
  openAlarms(): string[] {
    return [...this.raised.keys()];
  }

  /** The earliest server time at which a tick would raise or clear something, if any. */
  nextDeadline(): number | null {
    const s = this.settings;
    let next = Infinity;
    const train = front(this.open);
    if (train) next = Math.min(next, train[1].last + s.trainGapMs + 1);
    const stuck = front(this.stuckDue);
    if (stuck) next = Math.min(next, stuck[1] + s.stuckAfterMs);
    const chatter = front(this.chatterSeen);
    if (chatter) next = Math.min(next, chatter[1] + s.chatterQuietMs);
    const offline = front(this.offlineDue);
    if (offline) next = Math.min(next, offline[1] + s.nodeOfflineAfterMs);
    return next === Infinity ? null : Math.max(next, this.clock);
  }

  /** One input; returns the alarms to raise, repeat or clear because of it. */
  watch(input: WatchInput): AlarmAction[] {
    this.actions = [];
    this.clock = Math.max(this.clock, input.at);
    switch (input.type) {
      case "pulse":
        this.onPulse(input.detector, input.board);
        break;
      case "state":
        for (const name in input.latches ?? {}) this.mark(`latch:${name}`, input.latches![name]);
        for (const name in input.counters ?? {}) this.mark(`counter:${name}`, input.counters![name] > 0);
        this.finishDueTrains();
        break;
      case "node":
        this.onNode(input.node, input.online);
        this.finishDueTrains();
        break;
      case "tick":
        this.finishDueTrains();
        break;
    }
    this.checkStuck();
    this.checkChatterQuiet();
    this.checkOffline();
    return this.actions;
  }

  private raise(kind: WatchedKind, subject: string, message: string): void {
    const key = keyOf(kind, subject);
    const open = this.raised.get(key);
    if (open === undefined) {
      this.raised.set(key, message);
      this.actions.push({ op: "raise", kind, subject, message, at: this.clock });
      return;
    }
    const rule = REPEAT_RULES[kind];
    if (rule === "always" || (rule === "changed" && open !== message)) {
      this.raised.set(key, message);
      this.actions.push({ op: "repeat", kind, subject, message, at: this.clock });
    }
  }

  private clear(kind: WatchedKind, subject: string): void {
    const key = keyOf(kind, subject);
    const message = this.raised.get(key);
    if (message === undefined) return;
    this.raised.delete(key);
    this.actions.push({ op: "clear", kind, subject, message, at: this.clock });
  }

  private onPulse(d: string, board: BoardTime | undefined): void {
    const now = this.clock;
    const s = this.settings;
    // This detector's own train is judged by the board's gap below, not by the server's clock.
    let mine = this.open.get(d);
    if (mine) this.open.delete(d);
    this.finishDueTrains();
    const prev = this.lastPulse.get(d);
    const gap = prev === undefined ? null : pulseGapMs(prev, now, board);
    const chatter = gap !== null && gap < s.chatterMinGapMs;
    if (chatter) {
      touch(this.chatterSeen, d, now);
      this.raise(ALARM_KIND.chatter, d, alarmText.chatter(d, gap, s.chatterMinGapMs));
    }
    if (mine && gap !== null && gap > s.trainGapMs) {
      this.finishTrain(d, mine);
      mine = undefined;
    }
    if (mine) {
      // A chattering pulse is not an axle: it would spoil the axle count.
      if (!chatter) mine.axles++;
      mine.last = now;
      this.open.set(d, mine);
    } else {
      this.open.set(d, { axles: 1, last: now });
      this.trains.set(d, (this.trains.get(d) ?? 0) + 1);
    }
    this.lastPulse.set(d, { at: now, board });

    const before = this.graph.before[d] ?? [];
    const after = this.graph.after[d] ?? [];
    let marks = this.marks.get(d);
    if (!marks) this.marks.set(d, (marks = new Map()));
    for (const n of before) marks.set(n, this.trains.get(n) ?? 0);
    for (const n of after) marks.set(n, this.trains.get(n) ?? 0);
    this.clear(ALARM_KIND.detectorSilent, d);
    // Did the trains at d pass a silent detector on the way?
    for (const other of before) this.checkSilent(other);
    for (const next of after) this.checkSilent(next);

    for (const key of this.keysOfDetector.get(d) ?? []) if (this.stuckDue.has(key)) touch(this.stuckDue, key, now);
  }

  private onNode(node: string, online: boolean): void {
    if (online) {
      this.offlineDue.delete(node);
      this.clear(ALARM_KIND.nodeOffline, node);
    } else if (!this.offlineDue.has(node) && !this.raised.has(keyOf(ALARM_KIND.nodeOffline, node))) {
      this.offlineDue.set(node, this.clock);
    }
  }

  /** Trains whose last axle is long enough ago are complete: count and match them, oldest first. */
  private finishDueTrains(): void {
    for (;;) {
      const next = front(this.open);
      if (!next || this.clock - next[1].last <= this.settings.trainGapMs) return;
      this.open.delete(next[0]);
      this.finishTrain(next[0], next[1]);
    }
  }

  private finishTrain(detector: string, train: OpenTrain): void {
    let from: string | undefined;
    let oldest = Infinity;
    for (const d of this.graph.before[detector] ?? []) {
      const queue = this.counted.get(d);
      if (queue && queue.length > 0 && queue[0].done < oldest) {
        oldest = queue[0].done;
        from = d;
      }
    }
    if (from !== undefined) {
      const earlier = this.counted.get(from)!.shift()!;
      const subject = `${from}→${detector}`;
      if (Math.abs(earlier.axles - train.axles) > this.settings.axleMismatchTolerance) {
        this.raise(ALARM_KIND.axleMismatch, subject, alarmText.axleMismatch(from, earlier.axles, detector, train.axles));
      } else {
        this.clear(ALARM_KIND.axleMismatch, subject);
      }
    }
    if ((this.graph.after[detector] ?? []).length > 0) {
      let queue = this.counted.get(detector);
      if (!queue) this.counted.set(detector, (queue = []));
      queue.push({ axles: train.axles, done: train.last });
      // Trains that went elsewhere (or were never seen again) must not pile up.
      if (queue.length > COUNTED_TRAINS_KEPT) queue.shift();
    }
  }

  private checkSilent(d: string): void {
    const marks = this.marks.get(d);
    const seen = (n: string) => (this.trains.get(n) ?? 0) - (marks?.get(n) ?? 0);
    const g = this.graph;
    let witness: string | undefined;
    // Only a neighbour that trains can reach by no other way than d is a witness: a shared
    // exit (two routes merging) also sees the other route's trains.
    for (const n of g.after[d] ?? []) {
      if ((g.before[n] ?? []).length === 1 && seen(n) >= this.settings.silentAfterTrains) {
        witness = n;
        break;
      }
    }
    // Trains seen before d must cross d, but one may still be waiting or in the section.
    if (witness === undefined) {
      for (const n of g.before[d] ?? []) {
        if ((g.after[n] ?? []).length === 1 && seen(n) >= this.settings.silentAfterTrains + 1) {
          witness = n;
          break;
        }
      }
    }
    if (witness !== undefined) this.raise(ALARM_KIND.detectorSilent, d, alarmText.silent(d, witness, seen(witness)));
  }

  private detectorsOf(name: string): string[] {
    let list = this.detectorsOfName.get(name);
    if (!list) this.detectorsOfName.set(name, (list = detectorsFor(name, this.routes)));
    return list;
  }

  private mark(key: string, on: boolean): void {
    const wasSet = this.setSince.has(key);
    if (on && !wasSet) {
      this.setSince.set(key, this.clock);
      this.stuckDue.set(key, this.clock);
      for (const d of this.detectorsOf(nameOfKey(key))) {
        let keys = this.keysOfDetector.get(d);
        if (!keys) this.keysOfDetector.set(d, (keys = new Set()));
        keys.add(key);
      }
    } else if (!on && wasSet) {
      this.setSince.delete(key);
      this.stuckDue.delete(key);
      for (const d of this.detectorsOf(nameOfKey(key))) this.keysOfDetector.get(d)?.delete(key);
      this.clear(ALARM_KIND.stuck, nameOfKey(key));
    }
  }

  private checkStuck(): void {
    for (;;) {
      const next = front(this.stuckDue);
      if (!next || this.clock - next[1] < this.settings.stuckAfterMs) return;
      const [key] = next;
      this.stuckDue.delete(key);
      const name = nameOfKey(key);
      this.raise(ALARM_KIND.stuck, name, alarmText.stuck(name, isLatchKey(key), this.settings.stuckAfterMs, this.detectorsOf(name)));
    }
  }

  private checkChatterQuiet(): void {
    for (;;) {
      const next = front(this.chatterSeen);
      if (!next || this.clock - next[1] < this.settings.chatterQuietMs) return;
      this.chatterSeen.delete(next[0]);
      this.clear(ALARM_KIND.chatter, next[0]);
    }
  }

  private checkOffline(): void {
    for (;;) {
      const next = front(this.offlineDue);
      if (!next || this.clock - next[1] < this.settings.nodeOfflineAfterMs) return;
      this.offlineDue.delete(next[0]);
      this.raise(ALARM_KIND.nodeOffline, next[0], alarmText.nodeOffline(next[0], this.settings.nodeOfflineAfterMs));
    }
  }
}
