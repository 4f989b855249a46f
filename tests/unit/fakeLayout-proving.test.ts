/**
 * The demo's fake trains against what the demo's rulebooks are proved for (their `proving`
 * block, as published by the demo seed): no train longer than `maxAxles`, never more trains on a
 * route at once than `maxTrainsPerRoute` (routes sharing signal, approach and entry count
 * together, as in the prover). Each shipped scenario is played for an hour, looping, against the
 * real rulebook engine and the server's alarm watchers: no alarm, every road used, and something
 * moving on the boards (a pulse or a points report) within about 10 s at any moment.
 */
import path from "node:path";
import { describe, expect, it } from "vitest";
import { checkScenarioAgainstLayout, loadScenarioFile, parseScenario, ScenarioInvalidError } from "../../broker/fakeLayout/scenario";
import { kestrelBankLayout, wrenfoldLoopLayout } from "@shared/demo/fernmoor";
import type { LayoutFile } from "@shared/layout/schema";
import { playFakeDay } from "../support/fakeDay";

const SCENARIO_DIR = path.resolve(__dirname, "../../broker/fakeLayout/scenarios");
const HOUR_MS = 60 * 60_000;
/** "Someone opening the control room sees movement within about 10 s." */
const LOOK_MS = 10_000;
/** The most of the time a first look may wait longer than LOOK_MS, and the longest quiet spell. */
const MOST_QUIET_SHARE = 0.05;
const LONGEST_QUIET_MS = 20_000;

const DEMOS: [string, () => LayoutFile, string[]][] = [
  ["Kestrel Bank", kestrelBankLayout, ["main", "branch", "shed"]],
  ["Wrenfold Loop", wrenfoldLoopLayout, ["through", "loop"]],
];

/** Route id → its queue in the prover: routes sharing signal, approach and entry share one. */
function queues(layout: LayoutFile): Map<string, string> {
  return new Map(layout.rulebook.proving!.routes.map((r) => [r.id, [r.signal, ...r.approach, r.entry].join("|")]));
}

describe.each(DEMOS)("the fake trains at %s", (_name, makeLayout, roads) => {
  const layout = makeLayout();
  const proving = layout.rulebook.proving!;
  const scenario = loadScenarioFile(path.join(SCENARIO_DIR, `${layout.slug}-day.json`));

  it("are no longer than the rulebook is proved for", () => {
    expect(proving.maxAxles).toBeGreaterThan(0);
    for (const train of scenario.trains) expect(train.axles, train.name).toBeLessThanOrEqual(proving.maxAxles);
  });

  it("never run more trains on a route than proved for, raise no alarm, use every road and keep moving", () => {
    const day = playFakeDay(layout, scenario, { loop: true });
    const queueOf = queues(layout);
    let most = 0;
    day.afterEach(() => {
      const count = new Map<string, number>();
      for (const train of day.player.snapshot()) {
        const queue = queueOf.get(train.route)!;
        count.set(queue, (count.get(queue) ?? 0) + 1);
      }
      most = Math.max(most, ...count.values());
      expect(most).toBeLessThanOrEqual(proving.maxTrainsPerRoute);
    });
    day.scheduler.advanceBy(HOUR_MS);
    day.finish();

    // Trains did queue (one waiting while another ran), never past the cap.
    expect(most).toBeGreaterThan(1);
    expect(day.changes.filter((c) => c.kind === "alarm" || c.kind === "fault")).toEqual([]);
    expect(day.alarms).toEqual([]);
    const taken = new Set(day.events.flatMap((e) => (e.type === "takes-road" ? [e.route] : e.type === "appears" ? e.route.split("|") : [])));
    for (const road of roads) expect(taken).toContain(road);
    expect(day.events.filter((e) => e.type === "day-over").length).toBeGreaterThan(1);

    const times = [0, ...day.sentAt];
    const gaps = times.slice(1).map((t, i) => t - times[i]);
    expect(times[1]).toBeLessThan(LOOK_MS);
    expect(Math.max(...gaps)).toBeLessThan(LONGEST_QUIET_MS);
    const waitedLonger = gaps.reduce((sum, gap) => sum + Math.max(0, gap - LOOK_MS), 0);
    expect(waitedLonger / times[times.length - 1]).toBeLessThan(MOST_QUIET_SHARE);
  });
});

describe("scenario check against the proving sizes", () => {
  it("refuses a train longer than the rulebook is proved for, with its path", () => {
    const layout = kestrelBankLayout();
    const axles = layout.rulebook.proving!.maxAxles + 1;
    const scenario = parseScenario({ format: "blocklight.scenario/1", name: "too long", trains: [{ route: "main", axles, axleSpacingM: 0.3, speedMps: 0.5, startS: 0 }] });
    expect(() => checkScenarioAgainstLayout(scenario, layout)).toThrow(ScenarioInvalidError);
    try {
      checkScenarioAgainstLayout(scenario, layout);
    } catch (err) {
      expect((err as ScenarioInvalidError).errors).toEqual([{ path: "$.trains[0].axles", message: expect.stringContaining("proved for") }]);
    }
  });
});
