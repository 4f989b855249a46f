import { describe, expect, it } from "vitest";
import {
  createWatchState,
  DEFAULT_WATCHER_CONFIG,
  detectorsFor,
  routeGraph,
  watch,
  type AlarmAction,
  type WatchInput,
  type WatchRoute,
} from "../../server/features/alarms/watchers";

// Kestrel Bank's routes (shared/demo/fernmoor.ts): main MA→ME→JX, branch BA→BE→JX.
const ROUTES: WatchRoute[] = [
  { id: "main", signal: "M1", approach: ["MA"], entry: "ME", exit: ["JX"] },
  { id: "branch", signal: "B1", approach: ["BA"], entry: "BE", exit: ["JX"] },
];
const CONFIG = { ...DEFAULT_WATCHER_CONFIG, stuckAfterMs: 60_000, trainGapMs: 1_000, chatterQuietMs: 10_000 };

function run(inputs: WatchInput[]): AlarmAction[] {
  const graph = routeGraph(ROUTES);
  let state = createWatchState();
  const actions: AlarmAction[] = [];
  // The pipeline delivers inputs in time order; the tables here are written train by train.
  const ordered = inputs.map((input, i) => ({ input, i })).sort((a, b) => a.input.at - b.input.at || a.i - b.i).map((x) => x.input);
  for (const input of ordered) {
    const result = watch(CONFIG, ROUTES, graph, state, input);
    state = result.state;
    actions.push(...result.actions);
  }
  return actions;
}

const pulse = (detector: string, at: number): WatchInput => ({ type: "pulse", detector, at });
const tick = (at: number): WatchInput => ({ type: "tick", at });
/** A two-axle train crossing detectors one after another, 2 s apart, axles 300 ms apart. */
const train = (detectors: string[], start: number, axles = 2): WatchInput[] =>
  detectors.flatMap((d, i) => Array.from({ length: axles }, (_, a) => pulse(d, start + i * 2_000 + a * 300)));
const raised = (actions: AlarmAction[], kind: string) => actions.filter((a) => a.op === "raise" && a.kind === kind).map((a) => a.subject);
const cleared = (actions: AlarmAction[], kind: string) => actions.filter((a) => a.op === "clear" && a.kind === kind).map((a) => a.subject);

describe("alarm watchers", () => {
  it.each([
    ["a latch set with no movement for longer than the limit", [{ type: "state", at: 0, latches: { throat: true } }, tick(61_000)] as WatchInput[], ["throat"]],
    ["a counter above 0 with no movement", [{ type: "state", at: 0, counters: { mainApproach: 1 } }, tick(61_000)] as WatchInput[], ["mainApproach"]],
    ["a counter reset before the limit", [{ type: "state", at: 0, counters: { junction: 2 } }, { type: "state", at: 30_000, counters: { junction: 0 } }, tick(61_000)] as WatchInput[], []],
    ["a counter above 0 while its route keeps moving", [{ type: "state", at: 0, counters: { mainApproach: 1 } }, pulse("MA", 50_000), tick(61_000)] as WatchInput[], []],
    ["movement on another route does not count", [{ type: "state", at: 0, counters: { mainApproach: 1 } }, pulse("BA", 50_000), tick(61_000)] as WatchInput[], ["mainApproach"]],
  ])("stuck: %s", (_name, inputs, expected) => {
    expect(raised(run(inputs), "stuck")).toEqual(expected);
  });

  it("a stuck alarm is raised once and cleared when the counter is zeroed", () => {
    const actions = run([{ type: "state", at: 0, counters: { junction: 1 } }, tick(61_000), tick(62_000), { type: "state", at: 63_000, counters: { junction: 0 } }]);
    expect(raised(actions, "stuck")).toEqual(["junction"]);
    expect(cleared(actions, "stuck")).toEqual(["junction"]);
  });

  it.each([
    ["pulses 10 ms apart", [pulse("MA", 0), pulse("MA", 10)], ["MA"]],
    ["pulses 39 ms apart", [pulse("MA", 0), pulse("MA", 39)], ["MA"]],
    ["pulses 40 ms apart (a real wheelset gap)", [pulse("MA", 0), pulse("MA", 40)], []],
    ["pulses close together on different detectors", [pulse("MA", 0), pulse("BA", 5)], []],
  ])("chatter: %s", (_name, inputs, expected) => {
    expect(raised(run(inputs), "chatter")).toEqual(expected);
  });

  it("chatter clears after a quiet spell", () => {
    const actions = run([pulse("MA", 0), pulse("MA", 10), tick(20_000)]);
    expect(cleared(actions, "chatter")).toEqual(["MA"]);
  });

  it.each([
    ["every detector sees every train", [...train(["MA", "ME", "JX"], 0), ...train(["MA", "ME", "JX"], 20_000)], []],
    ["ME misses three trains that MA and JX see", [...train(["MA", "JX"], 0), ...train(["MA", "JX"], 20_000), ...train(["MA", "JX"], 40_000)], ["ME"]],
    ["BE misses trains that JX sees from the main line", [...train(["MA", "ME", "JX"], 0), ...train(["MA", "ME", "JX"], 20_000), ...train(["MA", "ME", "JX"], 40_000)], []],
    ["ME misses only one train", [...train(["MA", "JX"], 0)], []],
    ["the last detector JX misses three trains that ME sees", [...train(["MA", "ME"], 0), ...train(["MA", "ME"], 20_000), ...train(["MA", "ME"], 40_000)], ["JX"]],
  ])("detector silent: %s", (_name, inputs, expected) => {
    expect(raised(run(inputs), "detector-silent")).toEqual(expected);
  });

  it("a silent detector is cleared by its next pulse", () => {
    const actions = run([...train(["MA", "JX"], 0), ...train(["MA", "JX"], 20_000), ...train(["MA", "JX"], 40_000), pulse("ME", 50_000)]);
    expect(cleared(actions, "detector-silent")).toEqual(["ME"]);
  });

  it.each([
    ["the same count everywhere", [...train(["MA", "ME", "JX"], 0, 3), tick(30_000)], []],
    ["one axle missed at ME", [...train(["MA"], 0, 3), ...train(["ME"], 5_000, 2), ...train(["JX"], 10_000, 2), tick(30_000)], ["MA→ME"]],
    ["branch and main trains both matched at the shared exit", [...train(["BA", "BE"], 0, 2), ...train(["MA", "ME"], 1_000, 3), ...train(["JX"], 8_000, 2), ...train(["JX"], 14_000, 3), tick(30_000)], []],
  ])("axle mismatch: %s", (_name, inputs, expected) => {
    expect(raised(run(inputs), "axle-mismatch")).toEqual(expected);
  });

  it.each([
    ["mainApproach", ["MA", "ME", "JX"]],
    ["M1Approach", ["MA", "ME", "JX"]],
    ["junction", ["MA", "ME", "JX", "BA", "BE"]],
  ])("the detectors of %s", (name, expected) => {
    expect(detectorsFor(name, ROUTES)).toEqual(expected);
  });
});
