/**
 * Feeds the pure alarm watchers (watchers.ts) from the live pipeline: every committed update
 * on the bus (pulses and latch/counter changes) plus a clock tick, and turns their answers
 * into alarms through the alarm service. Stoppable; one per process.
 */
import { QueryTypes } from "sequelize";
import type { LiveUpdate } from "../../../shared/contract/live";
import type { AppDeps } from "../../deps";
import { findLayout, liveRulebookVersion } from "../layouts/service";
import { clearAlarms, raiseAlarm } from "./service";
import { createWatchState, DEFAULT_WATCHER_CONFIG, routeGraph, watch, type RouteGraph, type WatcherConfig, type WatchInput, type WatchRoute, type WatchState } from "./watchers";

export const WATCH_TICK_MS = 1_000;

export interface AlarmWatcherOptions {
  config?: Partial<WatcherConfig>;
  tickMs?: number;
  now?: () => number;
}

interface Watched {
  layoutId: number;
  routes: WatchRoute[];
  graph: RouteGraph;
  state: WatchState;
}

export interface AlarmWatchers {
  /** Resolves when every input so far has been watched and its alarms written. */
  idle(): Promise<void>;
  stop(): void;
}

export function startAlarmWatchers(deps: AppDeps, options: AlarmWatcherOptions = {}): AlarmWatchers {
  const config: WatcherConfig = { ...DEFAULT_WATCHER_CONFIG, ...options.config };
  const now = options.now ?? Date.now;
  const layouts = new Map<string, Promise<Watched | null>>();
  // One chain: inputs are watched in the order they were committed.
  let chain: Promise<void> = Promise.resolve();
  let stopped = false;

  const load = (slug: string) => {
    let entry = layouts.get(slug);
    if (!entry) {
      entry = (async () => {
        const layout = await findLayout(deps, slug);
        const version = await liveRulebookVersion(deps, layout);
        const routes = (version?.rulebook.proving?.routes ?? []) as WatchRoute[];
        let state = createWatchState();
        // Start from what the runtime holds now, so a latch already set is timed from here.
        const live = await deps.live?.liveState(slug).catch(() => null);
        if (live) state = watch(config, routes, routeGraph(routes), state, { type: "state", at: now(), latches: live.latches, counters: live.counters }).state;
        return { layoutId: layout.id, routes, graph: routeGraph(routes), state };
      })().catch((err) => {
        deps.logger.warn({ err, slug }, "alarm watchers could not load a layout");
        layouts.delete(slug);
        return null;
      });
      layouts.set(slug, entry);
    }
    return entry;
  };

  const feed = (slug: string, inputs: WatchInput[]) => {
    chain = chain
      .then(async () => {
        const w = await load(slug);
        if (!w || stopped) return;
        for (const input of inputs) {
          const result = watch(config, w.routes, w.graph, w.state, input);
          w.state = result.state;
          for (const action of result.actions) {
            if (action.op === "raise") await raiseAlarm(deps, { layoutId: w.layoutId, kind: action.kind, subject: action.subject, message: action.message });
            else await clearAlarms(deps, w.layoutId, action.kind, action.subject);
          }
        }
      })
      .catch((err) => deps.logger.error({ err, slug }, "alarm watcher failed"));
  };

  const onUpdate = (update: LiveUpdate) => {
    const inputs: WatchInput[] = [];
    const at = update.event ? Date.parse(update.event.receivedAt) : now();
    const e = update.event;
    if (e?.kind === "pulse" && e.status === "accepted" && e.detector) inputs.push({ type: "pulse", detector: e.detector, at });
    if (update.patch.latches || update.patch.counters) inputs.push({ type: "state", at, latches: update.patch.latches, counters: update.patch.counters });
    if (inputs.length > 0) feed(update.slug, inputs);
  };
  const onPublished = ({ slug }: { slug: string }) => {
    layouts.delete(slug);
  };

  deps.bus.on("live.update", onUpdate);
  deps.bus.on("rulebook.published", onPublished);
  const timer = setInterval(() => {
    for (const slug of layouts.keys()) feed(slug, [{ type: "tick", at: now() }]);
  }, options.tickMs ?? WATCH_TICK_MS);
  timer.unref();

  // Layouts already live are watched from the start, not only after their first pulse.
  void deps.db.sequelize
    .query<{ slug: string }>(`SELECT slug FROM layouts WHERE live_version IS NOT NULL AND archived_at IS NULL`, { type: QueryTypes.SELECT })
    .then((rows) => {
      for (const { slug } of rows) void load(slug);
    })
    .catch((err) => deps.logger.warn({ err }, "alarm watchers could not list layouts"));

  return {
    idle: () => chain,
    stop() {
      stopped = true;
      clearInterval(timer);
      deps.bus.off("live.update", onUpdate);
      deps.bus.off("rulebook.published", onPublished);
    },
  };
}
