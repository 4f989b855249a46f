/**
 * Plays a fake-layout scenario against the real rulebook engine standing in for the server
 * (pulses and points reports in, aspect and points commands out, each delivered 5 ms later as
 * over MQTT), with the server's own alarm watchers fed every pulse, on a hand-driven clock.
 * Used by tests/unit/fakeLayout.test.ts and tests/unit/fakeLayout-proving.test.ts.
 */
import { ManualScheduler } from "../../broker/fakeLayout/clock";
import { FakeLayoutPlayer, type OutMessage, type TrainEvent } from "../../broker/fakeLayout/player";
import { checkScenarioAgainstLayout, type Scenario } from "../../broker/fakeLayout/scenario";
import { AlarmWatcher, type AlarmAction, type WatchRoute } from "../../server/features/alarms/watchers";
import type { AspectPayload } from "@shared/contract/live";
import type { LayoutFile } from "@shared/layout/schema";
import { initialState, shownAspects, step, type Change } from "@shared/rulebook/engine";

const AT = "2026-05-02T10:00:00.000Z";
const DELIVERY_MS = 5;

export interface FakeDay {
  scheduler: ManualScheduler;
  player: FakeLayoutPlayer;
  events: TrainEvent[];
  changes: Change[];
  sent: OutMessage[];
  /** Scenario time of every message the boards sent (pulses and points reports). */
  sentAt: number[];
  /** What the server's alarm watchers raised or repeated. */
  alarms: AlarmAction[];
  /** Called after every message the boards send, once it has been applied. */
  afterEach: (check: () => void) => void;
  state: () => ReturnType<typeof initialState>;
  /** Lets the watchers finish the trains they are still counting (a tick at the clock's time). */
  finish: () => void;
}

export function playFakeDay(layout: LayoutFile, scenario: Scenario, options: { loop?: boolean } = {}): FakeDay {
  checkScenarioAgainstLayout(scenario, layout);
  const rulebook = layout.rulebook;
  const scheduler = new ManualScheduler();
  const watcher = new AlarmWatcher((rulebook.proving?.routes ?? []) as WatchRoute[]);
  const events: TrainEvent[] = [];
  const changes: Change[] = [];
  const sent: OutMessage[] = [];
  const sentAt: number[] = [];
  const alarms: AlarmAction[] = [];
  const checks: (() => void)[] = [];
  let state = initialState(rulebook, 0);
  let rev = 0;
  let lastShown = shownAspects(rulebook, state);
  let boots = 0;

  const watch = (actions: AlarmAction[]) => alarms.push(...actions.filter((a) => a.op !== "clear"));
  const publish = (shown: Record<string, string>) => {
    rev++;
    const at = rev;
    for (const [signal, value] of Object.entries(shown)) {
      scheduler.after(DELIVERY_MS, () => layout.nodes.forEach((n) => player.onAspect(n.id, signal, { aspect: value as AspectPayload["aspect"], rev: at, at: AT })));
    }
  };
  const receive = (m: OutMessage) => {
    sent.push(m);
    if (m.kind === "shown") return;
    sentAt.push(scheduler.now());
    const input =
      m.kind === "pulse"
        ? ({ type: "pulse", detector: m.payload.detector, at: scheduler.now() } as const)
        : ({ type: "points", points: m.payload.points, lies: m.payload.lies, at: scheduler.now() } as const);
    if (m.kind === "pulse") {
      const { boot, t } = m.payload;
      const board = boot !== undefined && t !== undefined ? { clock: `${m.node}/${boot}`, t } : undefined;
      watch(watcher.watch({ type: "pulse", detector: m.payload.detector, at: scheduler.now(), board }));
    }
    const result = step(rulebook, state, input);
    state = result.state;
    changes.push(...result.changes);
    watch(watcher.watch({ type: "state", at: scheduler.now(), counters: state.counters, latches: state.latches }));
    // A throw goes out as a points command to the board that drives the points, a little later.
    for (const c of result.changes) {
      if (c.kind !== "throw") continue;
      const node = layout.nodes.find((n) => n.points?.includes(c.name));
      const setRev = ++rev;
      if (node) scheduler.after(DELIVERY_MS, () => player.onPointsSet(node.id, c.name, { to: c.to as "normal" | "reverse", rev: setRev, at: AT }));
    }
    const shown = shownAspects(rulebook, state);
    const changed = Object.fromEntries(Object.entries(shown).filter(([s, a]) => lastShown[s] !== a));
    lastShown = shown;
    if (Object.keys(changed).length) publish(changed);
    for (const check of checks) check();
  };
  const player = new FakeLayoutPlayer({
    layout,
    scenario,
    scheduler,
    send: receive,
    onEvent: (e) => events.push(e),
    newBoot: () => `boot${++boots}`,
    loop: options.loop,
  });
  player.start();
  publish(lastShown);
  return { scheduler, player, events, changes, sent, sentAt, alarms, afterEach: (check) => checks.push(check), state: () => state, finish: () => watch(watcher.watch({ type: "tick", at: scheduler.now() })) };
}
