/**
 * Feeds the alarm watchers (watchers.ts) from the live pipeline: every committed update on
 * the bus (pulses with the board's clock, node status, latch/counter changes) goes through
 * the layout's watcher at once, in the bus listener (a few µs, no promise chain), and its
 * answers go to the bounded alarm writer. One timer per layout ticks the watcher when its
 * next "nothing happened for N" deadline is due. Stoppable; one per process.
 */
import { QueryTypes } from "sequelize";
import type { LivePatch, LiveStep, LiveUpdate } from "@shared/contract/live";
import { systemClock, type Cancel, type Clock } from "../../clock";
import type { AppDeps } from "../../deps";
import { findLayout, liveRulebookVersion } from "../../data/layouts";
import { AlarmWriter } from "./alarmWriter";
import { AlarmWatcher, type WatchInput, type WatchRoute } from "./watchers";
import { DEFAULT_WATCHER_SETTINGS, withDefaults, type WatcherSettings } from "./watcherSettings";

/** Inputs kept for a layout whose watcher is still loading; beyond this the oldest go. */
const MAX_EARLY_INPUTS = 10_000;
/** A timer never waits longer than this (so a clock jump cannot leave a deadline unwatched). */
const MAX_TIMER_MS = 60_000;

export interface AlarmWatcherOptions {
  /** Settings for every layout without its own (e.g. tests with short times). */
  settings?: Partial<WatcherSettings>;
  /** @deprecated the old name of `settings`. */
  config?: Partial<WatcherSettings>;
  /** Per-layout settings, by slug, at start. */
  layoutSettings?: Record<string, Partial<WatcherSettings>>;
  /** The longest a layout's timer waits before looking again (default a minute). */
  tickMs?: number;
  /** Time and timers (the runtime's clock; tests pass a hand-driven one). */
  clock?: Clock;
}

interface Watched {
  layoutId: number;
  slug: string;
  watcher: AlarmWatcher;
  timer: Cancel | null;
  timerAt: number;
}

interface Loading {
  promise: Promise<Watched | null>;
  early: WatchInput[];
  dropped: number;
}

export interface AlarmWatchers {
  /** Resolves when every input so far has been watched and its alarms written. */
  idle(): Promise<void>;
  /** New thresholds for one layout, from now on (running-day alarm settings). */
  setSettings(slug: string, settings: Partial<WatcherSettings>): void;
  settingsOf(slug: string): WatcherSettings;
  stop(): Promise<void>;
}

export function startAlarmWatchers(deps: AppDeps, options: AlarmWatcherOptions = {}): AlarmWatchers {
  const base: WatcherSettings = withDefaults({ ...DEFAULT_WATCHER_SETTINGS, ...options.config, ...options.settings });
  const perLayout = new Map<string, WatcherSettings>(Object.entries(options.layoutSettings ?? {}).map(([slug, s]) => [slug, { ...base, ...s }]));
  const clock = options.clock ?? systemClock;
  const now = () => clock.now();
  const writer = new AlarmWriter(deps);
  const watched = new Map<string, Watched>();
  const loading = new Map<string, Loading>();
  let stopped = false;

  const settingsOf = (slug: string) => perLayout.get(slug) ?? base;

  const run = (w: Watched, input: WatchInput, eventId: string | null = null) => {
    for (const a of w.watcher.watch(input)) {
      writer.enqueue({ op: a.op, layoutId: w.layoutId, kind: a.kind, subject: a.subject, message: a.message, at: a.at, eventId: a.op === "raise" ? eventId : null });
    }
  };

  const arm = (w: Watched) => {
    if (stopped) return;
    const due = w.watcher.nextDeadline();
    if (due === null) {
      w.timer?.();
      w.timer = null;
      return;
    }
    // Most inputs leave the deadline where it was: keep the timer rather than make a new one.
    if (w.timer && w.timerAt === due) return;
    w.timer?.();
    w.timerAt = due;
    w.timer = clock.after(Math.min(options.tickMs ?? MAX_TIMER_MS, Math.max(0, due - now())), () => {
      w.timer = null;
      run(w, { type: "tick", at: now() });
      arm(w);
    });
  };

  const load = (slug: string): Loading => {
    const existing = loading.get(slug);
    if (existing) return existing;
    const entry: Loading = { early: [], dropped: 0, promise: Promise.resolve(null) };
    entry.promise = (async () => {
      const layout = await findLayout(deps, slug);
      const version = await liveRulebookVersion(deps, layout);
      const routes = (version?.rulebook.proving?.routes ?? []) as WatchRoute[];
      const w: Watched = { layoutId: layout.id, slug, watcher: new AlarmWatcher(routes, settingsOf(slug)), timer: null, timerAt: 0 };
      // Start from what the runtime holds now, so a latch already set is timed from here.
      const live = await deps.live?.liveState(slug).catch(() => null);
      if (live) run(w, { type: "state", at: now(), latches: live.latches, counters: live.counters });
      return w;
    })()
      .then((w) => {
        loading.delete(slug);
        if (stopped) return null;
        const previous = watched.get(slug);
        previous?.timer?.();
        watched.set(slug, w);
        if (entry.dropped) deps.logger.warn({ slug, dropped: entry.dropped }, "alarm watchers: inputs dropped while the layout loaded");
        for (const input of entry.early) run(w, input);
        arm(w);
        return w;
      })
      .catch((err) => {
        deps.logger.warn({ err, slug }, "alarm watchers could not load a layout");
        loading.delete(slug);
        return null;
      });
    loading.set(slug, entry);
    return entry;
  };

  /** What one committed step tells the watchers (its own patch: the state as of that step). */
  const inputsOf = (step: LiveStep, patch: LivePatch, inputs: WatchInput[]): void => {
    const e = step.event;
    const at = e ? Date.parse(e.receivedAt) : now();
    if (e?.status === "accepted" && e.kind === "pulse" && e.detector) {
      // The board's clock runs per boot: pulses of one boot are timed against each other by it.
      const board = e.boardT !== null && e.node && e.boot ? { clock: `${e.node}\u0000${e.boot}`, t: e.boardT } : undefined;
      inputs.push(board ? { type: "pulse", detector: e.detector, at, board } : { type: "pulse", detector: e.detector, at });
    }
    if (e?.status === "accepted" && e.kind === "status" && e.node && patch.nodes?.[e.node]) {
      inputs.push({ type: "node", at, node: e.node, online: patch.nodes[e.node].online });
    }
    if (patch.latches || patch.counters) inputs.push({ type: "state", at, latches: patch.latches, counters: patch.counters });
  };

  const onUpdate = (update: LiveUpdate, patches: LivePatch[]) => {
    if (stopped) return;
    const w = watched.get(update.slug);
    if (w) {
      const one: WatchInput[] = [];
      update.steps.forEach((step, i) => {
        inputsOf(step, patches[i] ?? {}, one);
        for (const input of one) run(w, input, step.event?.id ?? null);
        one.length = 0;
      });
      arm(w);
      return;
    }
    const inputs: WatchInput[] = [];
    update.steps.forEach((step, i) => inputsOf(step, patches[i] ?? {}, inputs));
    if (inputs.length === 0) return;
    const entry = load(update.slug);
    for (const input of inputs) {
      entry.early.push(input);
      if (entry.early.length > MAX_EARLY_INPUTS) {
        entry.early.shift();
        entry.dropped++;
      }
    }
  };
  const onPublished = ({ slug }: { slug: string }) => {
    // New routes: a fresh watcher (its open alarms stay in the database until cleared).
    const w = watched.get(slug);
    w?.timer?.();
    watched.delete(slug);
    void load(slug);
  };

  deps.bus.on("live.update", onUpdate);
  deps.bus.on("rulebook.published", onPublished);

  // Layouts already live are watched from the start, not only after their first pulse.
  void deps.db.sequelize
    .query<{ slug: string }>(`SELECT slug FROM layouts WHERE live_version IS NOT NULL AND archived_at IS NULL`, { type: QueryTypes.SELECT })
    .then((rows) => {
      for (const { slug } of rows) if (!watched.has(slug)) void load(slug);
    })
    .catch((err) => deps.logger.warn({ err }, "alarm watchers could not list layouts"));

  return {
    async idle() {
      await Promise.all([...loading.values()].map((l) => l.promise));
      await writer.idle();
    },
    setSettings(slug, settings) {
      const next = { ...base, ...perLayout.get(slug), ...settings };
      perLayout.set(slug, next);
      const w = watched.get(slug);
      if (w) {
        w.watcher.setSettings(next);
        // A shorter limit may be due already.
        run(w, { type: "tick", at: now() });
        arm(w);
      }
    },
    settingsOf,
    async stop() {
      stopped = true;
      deps.bus.off("live.update", onUpdate);
      deps.bus.off("rulebook.published", onPublished);
      for (const w of watched.values()) w.timer?.();
      await writer.stop();
    },
  };
}
