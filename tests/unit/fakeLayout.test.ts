/**
 * The fake layout's playing core, with a hand-driven clock: which pulses each axle makes,
 * from which board, in what order; seq per boot; trains stopping at danger and going on
 * at clear; lamp-proving reports; scenario validation. The last block plays the shipped
 * demo scenarios against the real rulebook engine standing in for the server.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { ManualScheduler } from "../../broker/fakeLayout/clock";
import { FakeLayoutPlayer, LEAD_IN_M, STOP_SHORT_M, type OutMessage, type TrainEvent } from "../../broker/fakeLayout/player";
import { checkScenarioAgainstLayout, loadScenarioFile, parseScenario, ScenarioInvalidError, type Scenario } from "../../broker/fakeLayout/scenario";
import type { AspectPayload } from "@shared/contract/live";
import { kestrelBankLayout, wrenfoldLoopLayout } from "@shared/demo/fernmoor";
import type { LayoutFile } from "@shared/layout/schema";
import { playFakeDay } from "../support/fakeDay";

const SCENARIO_DIR = path.resolve(__dirname, "../../broker/fakeLayout/scenarios");
const MINUTE_MS = 60_000;

function scenarioOf(trains: Scenario["trains"]): Scenario {
  return { format: "blocklight.scenario/1", name: "test", trains };
}

function aspect(value: AspectPayload["aspect"], rev: number): AspectPayload {
  return { aspect: value, rev, at: "2026-05-02T10:00:00.000Z" };
}

function setUp(layout: LayoutFile, scenario: Scenario, options: { speed?: number; loop?: boolean } = {}) {
  const scheduler = new ManualScheduler();
  const sent: OutMessage[] = [];
  const events: TrainEvent[] = [];
  let boots = 0;
  const player = new FakeLayoutPlayer({
    layout,
    scenario,
    scheduler,
    send: (m) => sent.push(m),
    onEvent: (e) => events.push(e),
    newBoot: () => `boot${++boots}`,
    ...options,
  });
  const pulses = () => sent.filter((m) => m.kind === "pulse").map((m) => ({ node: m.node, ...(m.payload as object) }) as { node: string; detector: string; seq: number; boot: string; t: number });
  return { scheduler, player, sent, events, pulses };
}

const oneTrain = (over: Partial<Scenario["trains"][number]> = {}) =>
  scenarioOf([{ route: "main", axles: 3, axleSpacingM: 0.3, speedMps: 0.5, startS: 0, ...over }]);

describe("fake layout player: pulses", () => {
  it("makes one pulse per axle per detector, in path order, from the board serving each detector", () => {
    const { scheduler, player, pulses } = setUp(kestrelBankLayout(), oneTrain());
    player.start();
    player.onAspect("junction", "M1", aspect("clear", 1));
    scheduler.advanceBy(5 * MINUTE_MS);
    expect(pulses().map((p) => `${p.node}:${p.detector}`)).toEqual([
      ...Array(3).fill("bank-foot:MA"),
      ...Array(3).fill("junction:ME"),
      ...Array(3).fill("junction:JX"),
    ]);
  });

  it("counts seq from 1 per board and boot, and stamps t in ms since boot", () => {
    const { scheduler, player, pulses } = setUp(kestrelBankLayout(), oneTrain());
    player.start();
    player.onAspect("junction", "M1", aspect("clear", 1));
    scheduler.advanceBy(5 * MINUTE_MS);
    const byNode = (node: string) => pulses().filter((p) => p.node === node);
    expect(byNode("bank-foot").map((p) => p.seq)).toEqual([1, 2, 3]);
    expect(byNode("junction").map((p) => p.seq)).toEqual([1, 2, 3, 4, 5, 6]);
    expect(new Set(byNode("bank-foot").map((p) => p.boot)).size).toBe(1);
    expect(byNode("bank-foot")[0].boot).not.toBe(byNode("junction")[0].boot);
    // Leading axle starts LEAD_IN_M before MA at 0.5 m/s; the next axle 0.3 m behind it.
    expect(byNode("bank-foot").map((p) => p.t)).toEqual([(LEAD_IN_M / 0.5) * 1000, ((LEAD_IN_M + 0.3) / 0.5) * 1000, ((LEAD_IN_M + 0.6) / 0.5) * 1000]);
    const ts = pulses().map((p) => p.t);
    expect([...ts].sort((a, b) => a - b)).toEqual(ts);
  });

  it("reports t in wall milliseconds when played faster", () => {
    const { scheduler, player, pulses } = setUp(kestrelBankLayout(), oneTrain(), { speed: 4 });
    player.start();
    player.onAspect("junction", "M1", aspect("clear", 1));
    scheduler.advanceBy(5 * MINUTE_MS);
    expect(pulses()[0].t).toBe(((LEAD_IN_M / 0.5) * 1000) / 4);
  });

  it("uses a default gap between detectors on different lines (branch joining the main line)", () => {
    const { scheduler, player, pulses } = setUp(kestrelBankLayout(), oneTrain({ route: "branch", axles: 1 }));
    player.start();
    player.onAspect("quarry", "B1", aspect("clear", 1));
    scheduler.advanceBy(5 * MINUTE_MS);
    const t = Object.fromEntries(pulses().map((p) => [p.detector, p.t]));
    expect(t.BE - t.BA).toBe(((12.5 - 2.5) / 0.5) * 1000);
    expect(t.JX - t.BE).toBe((4 / 0.5) * 1000);
  });

  it("repeats a train every N seconds, count times", () => {
    const { scheduler, player, pulses, events } = setUp(kestrelBankLayout(), oneTrain({ axles: 2, repeat: { everyS: 120, count: 3 } }));
    player.start();
    player.onAspect("junction", "M1", aspect("clear", 1));
    scheduler.advanceBy(10 * MINUTE_MS);
    expect(events.filter((e) => e.type === "appears")).toHaveLength(3);
    expect(pulses()).toHaveLength(3 * 2 * 3);
    expect(events.at(-1)).toEqual({ type: "day-over", cycle: 1 });
  });
});

describe("fake layout player: obeying aspects", () => {
  it.each([
    ["danger", (p: FakeLayoutPlayer) => p.onAspect("junction", "M1", aspect("danger", 1))],
    ["nothing heard yet (dark)", () => {}],
  ])("stops short of the entry detector while the signal shows %s, and goes on at clear", (_label, setAspect) => {
    const { scheduler, player, pulses, events } = setUp(kestrelBankLayout(), oneTrain());
    player.start();
    setAspect(player);
    scheduler.advanceBy(10 * MINUTE_MS);
    expect(pulses().map((p) => p.detector)).toEqual(["MA", "MA", "MA"]);
    expect(player.snapshot()).toEqual([expect.objectContaining({ stopped: true, lead: expect.closeTo(10 - STOP_SHORT_M, 6) })]);
    expect(events).toContainEqual(expect.objectContaining({ type: "waits", signal: "M1" }));

    player.onAspect("junction", "M1", aspect("clear", 2));
    scheduler.advanceBy(MINUTE_MS);
    expect(pulses().map((p) => p.detector)).toEqual(["MA", "MA", "MA", "ME", "ME", "ME", "JX", "JX", "JX"]);
    expect(events).toContainEqual(expect.objectContaining({ type: "proceeds", signal: "M1", aspect: "clear" }));
  });

  it("takes no notice of an older aspect command than the one it has", () => {
    const { scheduler, player, pulses } = setUp(kestrelBankLayout(), oneTrain());
    player.start();
    player.onAspect("junction", "M1", aspect("danger", 5));
    player.onAspect("junction", "M1", aspect("clear", 4));
    scheduler.advanceBy(5 * MINUTE_MS);
    expect(pulses().map((p) => p.detector)).not.toContain("ME");
  });

  it("keeps the following train off the approach while the one ahead stands at the signal, then lets it on", () => {
    const { scheduler, player, pulses } = setUp(kestrelBankLayout(), oneTrain({ axles: 4, repeat: { everyS: 5, count: 2 } }));
    player.start();
    player.onAspect("junction", "M1", aspect("danger", 1));
    scheduler.advanceBy(5 * MINUTE_MS);
    const [first, second] = player.snapshot();
    expect(first.lead).toBeCloseTo(10 - STOP_SHORT_M, 6);
    expect(second).toMatchObject({ stopped: true, lead: expect.closeTo(-STOP_SHORT_M, 6) });
    expect(pulses().filter((p) => p.detector === "MA")).toHaveLength(4);

    player.onAspect("junction", "M1", aspect("clear", 2));
    scheduler.advanceBy(10_000);
    // The first train's last axle is past M1 (it went back to danger behind it): the second is let on.
    player.onAspect("junction", "M1", aspect("danger", 3));
    scheduler.advanceBy(MINUTE_MS);
    expect(pulses().filter((p) => p.detector === "MA")).toHaveLength(8);
    expect(player.snapshot().at(-1)).toMatchObject({ stopped: true, lead: expect.closeTo(10 - STOP_SHORT_M, 6) });
  });

  it("holds a train off a route that already has as many trains as the rulebook is proved for", () => {
    const layout = kestrelBankLayout();
    const max = layout.rulebook.proving!.maxTrainsPerRoute;
    const { scheduler, player, events } = setUp(layout, oneTrain({ axles: 2, repeat: { everyS: 1, count: max + 2 } }));
    player.start();
    scheduler.advanceBy(5 * MINUTE_MS);
    expect(player.snapshot()).toHaveLength(max);
    expect(events.filter((e) => e.type === "appears")).toHaveLength(max);
    player.onAspect("junction", "M1", aspect("clear", 1));
    scheduler.advanceBy(5 * MINUTE_MS);
    expect(events.filter((e) => e.type === "appears")).toHaveLength(max + 2);
    expect(events.filter((e) => e.type === "leaves")).toHaveLength(max + 2);
  });

  it("reports lamp proving from the board that serves the signal only", () => {
    const { player, sent } = setUp(kestrelBankLayout(), oneTrain());
    player.start();
    for (const node of ["bank-foot", "junction", "quarry"]) player.onAspect(node, "M1", aspect("clear", 7));
    player.onAspect("junction", "M1", aspect("danger", 6));
    expect(sent.filter((m) => m.kind === "shown")).toEqual([{ kind: "shown", node: "junction", payload: { signal: "M1", aspect: "clear", rev: 7 } }]);
  });
});

describe("scenario validation", () => {
  const valid = { format: "blocklight.scenario/1", name: "ok", trains: [{ route: "main", axles: 2, axleSpacingM: 0.3, speedMps: 0.5, startS: 0 }] };
  const withTrain = (over: object) => ({ ...valid, trains: [{ ...valid.trains[0], ...over }] });

  it.each([
    ["wrong format", { ...valid, format: "other/1" }, "$.format", "blocklight.scenario/1"],
    ["no trains", { ...valid, trains: [] }, "$.trains", "at least one train"],
    ["zero axles", withTrain({ axles: 0 }), "$.trains[0].axles", "at least 1 axle"],
    ["negative speed", withTrain({ speedMps: -1 }), "$.trains[0].speedMps", "more than 0"],
    ["unknown field", withTrain({ colour: "green" }), "$.trains[0]", "colour"],
    ["repeat without count", withTrain({ repeat: { everyS: 10 } }), "$.trains[0].repeat.count", ""],
  ])("refuses a scenario with %s", (_label, input, where, words) => {
    try {
      parseScenario(input, "s.json");
      expect.unreachable("should have refused");
    } catch (err) {
      expect(err).toBeInstanceOf(ScenarioInvalidError);
      const error = (err as ScenarioInvalidError).errors.find((e) => e.path === where);
      expect(error, JSON.stringify((err as ScenarioInvalidError).errors)).toBeDefined();
      expect((err as ScenarioInvalidError).message).toContain(words);
    }
  });

  it.each([
    ["an unknown route", withTrain({ route: "down" }), "$.trains[0].route", 'no route "down"'],
    ["alternatives with different signals", withTrain({ route: ["main", "branch"] }), "$.trains[0].route[1]", "share signal"],
    ["another layout", { ...valid, layout: "wrenfold-loop" }, "$.layout", 'not "kestrel-bank"'],
  ])("refuses, on Kestrel Bank, %s", (_label, input, where, words) => {
    const scenario = parseScenario(input);
    expect(() => checkScenarioAgainstLayout(scenario, kestrelBankLayout())).toThrow(ScenarioInvalidError);
    try {
      checkScenarioAgainstLayout(scenario, kestrelBankLayout());
    } catch (err) {
      expect((err as ScenarioInvalidError).errors).toContainEqual({ path: where, message: expect.stringContaining(words) });
    }
  });

  it("says so when the file is not JSON", () => {
    const file = path.join(fs.mkdtempSync(path.join(os.tmpdir(), "scenario-")), "bad.json");
    fs.writeFileSync(file, "{ trains: ");
    expect(() => loadScenarioFile(file)).toThrow(/not valid JSON/);
  });
});

function playWithEngine(layout: LayoutFile, scenarioFile: string, durationMs: number) {
  const day = playFakeDay(layout, loadScenarioFile(scenarioFile));
  day.scheduler.advanceBy(durationMs);
  return { events: day.events, changes: day.changes, state: day.state(), sent: day.sent };
}

describe("demo scenarios played against the rulebook", () => {
  it("runs a whole day at Kestrel Bank with no alarm, every train leaving", () => {
    const { events, changes, state } = playWithEngine(kestrelBankLayout(), path.join(SCENARIO_DIR, "kestrel-bank-day.json"), 40 * MINUTE_MS);
    expect(changes.filter((c) => c.kind === "alarm" || c.kind === "fault")).toEqual([]);
    const appeared = events.filter((e) => e.type === "appears").length;
    expect(appeared).toBeGreaterThan(10);
    expect(events.filter((e) => e.type === "leaves")).toHaveLength(appeared);
    expect(events).toContainEqual(expect.objectContaining({ type: "waits", signal: "B1" }));
    expect(Object.values(state.counters).every((n) => n === 0)).toBe(true);
  });

  it("runs a whole day at Wrenfold Loop using both roads, with no alarm", () => {
    const { events, changes, state } = playWithEngine(wrenfoldLoopLayout(), path.join(SCENARIO_DIR, "wrenfold-loop-day.json"), 40 * MINUTE_MS);
    expect(changes.filter((c) => c.kind === "alarm" || c.kind === "fault")).toEqual([]);
    const roads = new Set(events.filter((e) => e.type === "takes-road").map((e) => (e as { route: string }).route));
    expect(roads).toEqual(new Set(["through", "loop"]));
    const appeared = events.filter((e) => e.type === "appears").length;
    expect(events.filter((e) => e.type === "leaves")).toHaveLength(appeared);
    expect(Object.values(state.counters).every((n) => n === 0)).toBe(true);
  });
});
