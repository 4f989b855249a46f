/**
 * A straightforward reference for the alarm watchers: the whole state copied per input and
 * every rule checked by a full pass over it, as the watchers were first written. Slow on
 * purpose and easy to read; the property test checks the incremental watcher against it.
 */
import {
  alarmText,
  COUNTED_TRAINS_KEPT,
  detectorsFor,
  pulseGapMs,
  REPEAT_RULES,
  routeGraph,
  type AlarmAction,
  type BoardTime,
  type WatchedKind,
  type WatchInput,
  type WatchRoute,
} from "../../server/features/alarms/watchers";
import type { WatcherSettings } from "../../server/features/alarms/watcherSettings";

interface RefState {
  clock: number;
  /** Order of updates, to break ties between trains whose last axle came at the same time. */
  seq: number;
  setSince: Record<string, number>;
  stuckRaisedSince: Record<string, boolean>;
  lastPulse: Record<string, { at: number; board?: BoardTime }>;
  trains: Record<string, number>;
  marks: Record<string, Record<string, number>>;
  open: Record<string, { axles: number; last: number; seq: number }>;
  counted: Record<string, { axles: number; done: number }[]>;
  lastChatter: Record<string, number>;
  offlineSince: Record<string, number>;
  raised: Record<string, string>;
}

export function referenceWatcher(routes: WatchRoute[], initial: WatcherSettings) {
  let settings = { ...initial };
  const graph = routeGraph(routes);
  let state: RefState = {
    clock: 0,
    seq: 0,
    setSince: {},
    stuckRaisedSince: {},
    lastPulse: {},
    trains: {},
    marks: {},
    open: {},
    counted: {},
    lastChatter: {},
    offlineSince: {},
    raised: {},
  };

  const setSettings = (next: WatcherSettings) => {
    settings = { ...next };
  };
  return { watch, setSettings };

  function watch(input: WatchInput): AlarmAction[] {
    const s: RefState = structuredClone(state);
    const actions: AlarmAction[] = [];
    s.clock = Math.max(s.clock, input.at);
    const now = s.clock;
    const raise = (kind: WatchedKind, subject: string, message: string) => {
      const key = `${kind}|${subject}`;
      if (!(key in s.raised)) {
        s.raised[key] = message;
        actions.push({ op: "raise", kind, subject, message, at: now });
      } else if (REPEAT_RULES[kind] === "always" || (REPEAT_RULES[kind] === "changed" && s.raised[key] !== message)) {
        s.raised[key] = message;
        actions.push({ op: "repeat", kind, subject, message, at: now });
      }
    };
    const clear = (kind: WatchedKind, subject: string) => {
      const key = `${kind}|${subject}`;
      if (!(key in s.raised)) return;
      const message = s.raised[key];
      delete s.raised[key];
      actions.push({ op: "clear", kind, subject, message, at: now });
    };

    const finishTrain = (detector: string, train: { axles: number; last: number }) => {
      const upstream = (graph.before[detector] ?? []).filter((d) => (s.counted[d]?.length ?? 0) > 0);
      if (upstream.length > 0) {
        const from = upstream.sort((a, b) => s.counted[a][0].done - s.counted[b][0].done)[0];
        const earlier = s.counted[from].shift()!;
        const subject = `${from}→${detector}`;
        if (Math.abs(earlier.axles - train.axles) > settings.axleMismatchTolerance) raise("axle-mismatch", subject, alarmText.axleMismatch(from, earlier.axles, detector, train.axles));
        else clear("axle-mismatch", subject);
      }
      if ((graph.after[detector] ?? []).length > 0) {
        const queue = (s.counted[detector] ??= []);
        queue.push({ axles: train.axles, done: train.last });
        if (queue.length > COUNTED_TRAINS_KEPT) queue.shift();
      }
    };
    const finishTrains = (except?: string) => {
      const finished = Object.entries(s.open)
        .filter(([d, t]) => d !== except && now - t.last > settings.trainGapMs)
        .sort((a, b) => a[1].last - b[1].last || a[1].seq - b[1].seq);
      for (const [detector, train] of finished) {
        delete s.open[detector];
        finishTrain(detector, train);
      }
    };
    const checkSilent = (d: string) => {
      const marks = s.marks[d] ?? {};
      const seen = (n: string) => (s.trains[n] ?? 0) - (marks[n] ?? 0);
      const downstream = (graph.after[d] ?? []).filter((n) => (graph.before[n] ?? []).length === 1 && seen(n) >= settings.silentAfterTrains);
      const upstream = (graph.before[d] ?? []).filter((n) => (graph.after[n] ?? []).length === 1 && seen(n) >= settings.silentAfterTrains + 1);
      const witness = downstream[0] ?? upstream[0];
      if (witness) raise("detector-silent", d, alarmText.silent(d, witness, seen(witness)));
    };
    const mark = (key: string, on: boolean) => {
      if (on && s.setSince[key] === undefined) s.setSince[key] = now;
      if (!on && s.setSince[key] !== undefined) {
        delete s.setSince[key];
        delete s.stuckRaisedSince[key];
        clear("stuck", key.slice(key.indexOf(":") + 1));
      }
    };

    if (input.type === "pulse") {
      const d = input.detector;
      finishTrains(d);
      const prev = s.lastPulse[d];
      const gap = prev === undefined ? null : pulseGapMs(prev, now, input.board);
      const chatter = gap !== null && gap < settings.chatterMinGapMs;
      if (chatter) {
        s.lastChatter[d] = now;
        raise("chatter", d, alarmText.chatter(d, gap, settings.chatterMinGapMs));
      }
      if (s.open[d] && gap !== null && gap > settings.trainGapMs) {
        const train = s.open[d];
        delete s.open[d];
        finishTrain(d, train);
      }
      const open = s.open[d];
      if (open) {
        if (!chatter) open.axles++;
        open.last = now;
        open.seq = ++s.seq;
      } else {
        s.open[d] = { axles: 1, last: now, seq: ++s.seq };
        s.trains[d] = (s.trains[d] ?? 0) + 1;
      }
      s.lastPulse[d] = { at: now, board: input.board };
      const neighbours = [...(graph.before[d] ?? []), ...(graph.after[d] ?? [])];
      s.marks[d] = Object.fromEntries(neighbours.map((n) => [n, s.trains[n] ?? 0]));
      clear("detector-silent", d);
      for (const other of graph.before[d] ?? []) checkSilent(other);
      for (const next of graph.after[d] ?? []) checkSilent(next);
    } else if (input.type === "state") {
      for (const [name, on] of Object.entries(input.latches ?? {})) mark(`latch:${name}`, on);
      for (const [name, n] of Object.entries(input.counters ?? {})) mark(`counter:${name}`, n > 0);
      finishTrains();
    } else if (input.type === "node") {
      if (input.online) {
        delete s.offlineSince[input.node];
        clear("node-offline", input.node);
      } else if (s.offlineSince[input.node] === undefined) {
        s.offlineSince[input.node] = now;
      }
      finishTrains();
    } else {
      finishTrains();
    }

    for (const [key, since] of Object.entries(s.setSince)) {
      if (s.stuckRaisedSince[key]) continue;
      const name = key.slice(key.indexOf(":") + 1);
      const detectors = detectorsFor(name, routes);
      const moved = Math.max(since, ...detectors.map((d) => s.lastPulse[d]?.at ?? -Infinity));
      if (now - moved >= settings.stuckAfterMs) {
        s.stuckRaisedSince[key] = true;
        raise("stuck", name, alarmText.stuck(name, key.startsWith("latch:"), settings.stuckAfterMs, detectors));
      }
    }
    for (const [d, at] of Object.entries(s.lastChatter)) {
      if (now - at >= settings.chatterQuietMs) {
        delete s.lastChatter[d];
        clear("chatter", d);
      }
    }
    for (const [node, since] of Object.entries(s.offlineSince)) {
      if (!(`node-offline|${node}` in s.raised) && now - since >= settings.nodeOfflineAfterMs) raise("node-offline", node, alarmText.nodeOffline(node, settings.nodeOfflineAfterMs));
    }
    state = s;
    return actions;
  }
}
