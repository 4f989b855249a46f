import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { AlarmWatcher, detectorsFor, type AlarmAction, type WatchInput, type WatchRoute } from "../../server/features/alarms/watchers";
import { DEFAULT_WATCHER_SETTINGS, type WatcherSettings } from "../../server/features/alarms/watcherSettings";
import { kestrelRoutes } from "../fixtures/junctions";
import { referenceWatcher } from "./alarm-watchers.reference";

// Kestrel Bank's routes: main MA→ME→JX, branch BA→BE→JX.
const ROUTES: WatchRoute[] = kestrelRoutes();
const CONFIG: WatcherSettings = { ...DEFAULT_WATCHER_SETTINGS, stuckAfterMs: 60_000, trainGapMs: 1_000, chatterQuietMs: 10_000 };

function run(inputs: WatchInput[], settings: WatcherSettings = CONFIG): AlarmAction[] {
  const watcher = new AlarmWatcher(ROUTES, settings);
  const actions: AlarmAction[] = [];
  // The pipeline delivers inputs in time order; the tables here are written train by train.
  const ordered = inputs.map((input, i) => ({ input, i })).sort((a, b) => a.input.at - b.input.at || a.i - b.i).map((x) => x.input);
  for (const input of ordered) actions.push(...watcher.watch(input));
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

  describe("grouped: one alarm per kind and subject, with repeats", () => {
    it("an irregular chattering detector raises once, then repeats (each gap different)", () => {
      const actions = run([pulse("MA", 0), pulse("MA", 7), pulse("MA", 19), pulse("MA", 22), pulse("MA", 51)]);
      expect(actions.filter((a) => a.kind === "chatter").map((a) => a.op)).toEqual(["raise", "repeat", "repeat", "repeat"]);
      expect(actions.at(-1)?.message).toContain("29 ms apart");
    });

    it("a chatter alarm cleared by a quiet spell is raised afresh next time", () => {
      const actions = run([pulse("MA", 0), pulse("MA", 10), tick(20_000), pulse("MA", 30_000), pulse("MA", 30_005)]);
      expect(actions.filter((a) => a.kind === "chatter").map((a) => a.op)).toEqual(["raise", "clear", "raise"]);
    });

    it("a silent detector repeats only when the number of trains it missed grows", () => {
      const inputs = [0, 20_000, 40_000, 60_000].flatMap((start) => train(["MA", "JX"], start));
      const ops = run(inputs).filter((a) => a.kind === "detector-silent").map((a) => `${a.op}:${a.message.match(/counted (\d+) trains/)?.[1]}`);
      expect(ops).toEqual(["raise:3", "repeat:4"]);
    });
  });

  describe("timing from the board's own clock", () => {
    const at = (detector: string, received: number, t: number, clock = "board-a:9f2c1a"): WatchInput => ({ type: "pulse", detector, at: received, board: { clock, t } });

    it("pulses received in a burst but 640 ms apart on the board raise no chatter", () => {
      const inputs = Array.from({ length: 6 }, (_, i) => at("JX", 100_000 + i * 20, 5_000 + i * 640));
      expect(raised(run(inputs), "chatter")).toEqual([]);
    });

    it("pulses 10 ms apart on the board are chatter even when received far apart", () => {
      expect(raised(run([at("MA", 0, 1_000), at("MA", 500, 1_010)]), "chatter")).toEqual(["MA"]);
    });

    it("a new boot has a new clock: the gap falls back to receipt time", () => {
      expect(raised(run([at("MA", 0, 50_000, "board-a:one"), at("MA", 1_000, 3, "board-a:two")]), "chatter")).toEqual([]);
      expect(raised(run([at("MA", 0, 50_000, "board-a:one"), at("MA", 10, 90_000, "board-a:two")]), "chatter")).toEqual(["MA"]);
    });

    it("a train whose axles were received late in a lump is still one train", () => {
      // Three axles 300 ms apart on the board; the server received the last two 1.5 s late.
      const inputs = [...["MA", "ME"].flatMap((d, k) => [0, 1, 2].map((a) => at(d, k * 2_000 + a * 300, k * 2_000 + a * 300))), at("JX", 4_000, 4_000), at("JX", 5_800, 4_300), at("JX", 5_810, 4_600), tick(30_000)];
      expect(raised(run(inputs), "axle-mismatch")).toEqual([]);
    });
  });

  it.each([
    ["at once with no delay", 0, [{ type: "node", at: 1_000, node: "board-a", online: false }] as WatchInput[], ["board-a"]],
    ["after the delay", 5_000, [{ type: "node", at: 1_000, node: "board-a", online: false }, tick(6_000)] as WatchInput[], ["board-a"]],
    ["not before the delay", 5_000, [{ type: "node", at: 1_000, node: "board-a", online: false }, tick(5_999)] as WatchInput[], []],
    ["not if back in time", 5_000, [{ type: "node", at: 1_000, node: "board-a", online: false }, { type: "node", at: 3_000, node: "board-a", online: true }, tick(9_000)] as WatchInput[], []],
  ])("node offline: %s", (_name, delay, inputs, expected) => {
    expect(raised(run(inputs, { ...CONFIG, nodeOfflineAfterMs: delay }), "node-offline")).toEqual(expected);
  });

  it("axle counts within the tolerance match", () => {
    const inputs = [...train(["MA"], 0, 4), ...train(["ME"], 5_000, 3), tick(30_000)];
    expect(raised(run(inputs), "axle-mismatch")).toEqual(["MA→ME"]);
    expect(raised(run(inputs, { ...CONFIG, axleMismatchTolerance: 1 }), "axle-mismatch")).toEqual([]);
  });

  it("settings change while running; nextDeadline says when a tick is due", () => {
    const watcher = new AlarmWatcher(ROUTES, CONFIG);
    watcher.watch({ type: "state", at: 0, counters: { junction: 1 } });
    expect(watcher.nextDeadline()).toBe(60_000);
    watcher.setSettings({ ...CONFIG, stuckAfterMs: 30_000 });
    expect(watcher.nextDeadline()).toBe(30_000);
    expect(watcher.watch(tick(29_999))).toEqual([]);
    expect(watcher.watch(tick(30_000)).map((a) => `${a.op} ${a.kind} ${a.subject}`)).toEqual(["raise stuck junction"]);
    expect(watcher.nextDeadline()).toBeNull();
  });

  describe("the incremental watcher raises exactly what the straightforward reference does", () => {
    const detectors = ["MA", "ME", "BA", "BE", "JX", "ZZ"];
    // Round figures as well as any: thresholds are where the two implementations could differ.
    const ms = (max: number) => fc.oneof(fc.integer({ min: 0, max }), fc.constantFrom(...[0, 1, 10, 40, 300, 1_000, 4_000, 30_000].filter((v) => v <= max)));
    const boardOf: Record<string, string> = { MA: "a", ME: "a", BA: "b", BE: "b", JX: "c", ZZ: "c" };
    const step = fc.oneof(
      { weight: 8, arbitrary: fc.record({ type: fc.constant("pulse" as const), detector: fc.constantFrom(...detectors), dt: ms(3_000), lag: fc.integer({ min: -200, max: 200 }), boot: fc.constantFrom("1", "1", "1", "2"), board: fc.boolean() }) },
      { weight: 2, arbitrary: fc.record({ type: fc.constant("state" as const), dt: ms(20_000), latch: fc.constantFrom("shuntLock", "mainHeld"), on: fc.boolean(), counter: fc.constantFrom("mainApproach", "branchApproach", "junction"), n: fc.integer({ min: 0, max: 2 }) }) },
      { weight: 1, arbitrary: fc.record({ type: fc.constant("node" as const), dt: ms(5_000), node: fc.constantFrom("board-a", "board-b"), online: fc.boolean() }) },
      { weight: 2, arbitrary: fc.record({ type: fc.constant("tick" as const), dt: ms(40_000) }) },
    );
    const settings = fc.record({
      stuckAfterMs: ms(60_000).map((v) => Math.max(1_000, v)),
      chatterMinGapMs: ms(300),
      chatterQuietMs: ms(30_000),
      trainGapMs: ms(4_000).map((v) => Math.max(1, v)),
      silentAfterTrains: fc.integer({ min: 1, max: 3 }),
      axleMismatchTolerance: fc.integer({ min: 0, max: 2 }),
      nodeOfflineAfterMs: ms(10_000),
    });
    const normalise = (actions: AlarmAction[]) => actions.map((a) => JSON.stringify(a)).sort();

    it("on random input streams, including settings changed mid-stream", () => {
      fc.assert(
        fc.property(settings, settings, fc.array(step, { maxLength: 300 }), fc.nat(), (first, second, steps, switchAt) => {
          const incremental = new AlarmWatcher(ROUTES, first);
          const reference = referenceWatcher(ROUTES, first);
          let clock = 0;
          const boardClock: Record<string, number> = {};
          steps.forEach((s, i) => {
            if (i === switchAt % Math.max(1, steps.length)) {
              incremental.setSettings(second);
              reference.setSettings(second);
            }
            clock += s.dt;
            let input: WatchInput;
            if (s.type === "pulse") {
              const clockId = `${boardOf[s.detector]}:${s.boot}`;
              boardClock[clockId] = (boardClock[clockId] ?? 0) + Math.max(0, s.dt + s.lag);
              input = { type: "pulse", detector: s.detector, at: clock, ...(s.board ? { board: { clock: clockId, t: boardClock[clockId] } } : {}) };
            } else if (s.type === "state") {
              input = { type: "state", at: clock, latches: { [s.latch]: s.on }, counters: { [s.counter]: s.n } };
            } else if (s.type === "node") {
              input = { type: "node", at: clock, node: s.node, online: s.online };
            } else {
              input = { type: "tick", at: clock };
            }
            expect(normalise(incremental.watch(input))).toEqual(normalise(reference.watch(input)));
          });
        }),
        { numRuns: 300 },
      );
    });
  });
});
