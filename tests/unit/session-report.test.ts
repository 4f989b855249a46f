/**
 * The report's train tracking and figures, as a pure module: trains found from pulses alone
 * on converging and facing routes, silent and stray detectors, and the median.
 */
import { describe, expect, it } from "vitest";
import { kestrelBankLayout, wrenfoldLoopLayout } from "@shared/demo/fernmoor";
import { initialState, type EngineInput } from "@shared/rulebook/engine";
import { rulebookSchema, type ProvingRoute } from "@shared/rulebook/schema";
import { buildReport, median, type ReportInputs } from "../../server/features/sessions/report";
import { TrainTracker } from "../../server/features/sessions/trainTracker";
import { kestrelRoutes, wrenfoldRoutes } from "../fixtures/junctions";

const KESTREL = kestrelRoutes();
const WRENFOLD = wrenfoldRoutes();

/** `"MA@0 MA@0.5 ME@10"` → pulses at seconds. */
function track(routes: ProvingRoute[], script: string): TrainTracker {
  const tracker = new TrainTracker(routes);
  for (const word of script.trim().split(/\s+/)) {
    const [detector, s] = word.split("@");
    tracker.pulse(detector, Number(s) * 1000);
  }
  tracker.advance(1e9);
  return tracker;
}

describe("train tracker", () => {
  it.each([
    ["one main train", KESTREL, "MA@0 MA@0.5 ME@10 ME@10.5 JX@15 JX@15.5", [["main", { MA: 2, ME: 2, JX: 2 }]], {}],
    ["two routes sharing an exit", KESTREL, "BA@0 BA@1 BE@10 BE@11 MA@12 JX@20 JX@21 ME@30 JX@40", [["branch", { BA: 2, BE: 2, JX: 2 }], ["main", { MA: 1, ME: 1, JX: 1 }]], {}],
    ["a silent entry detector (counted 0, not out of step)", KESTREL, "MA@0 MA@0.5 JX@15 JX@15.5 MA@40 ME@50 JX@60", [["main", { MA: 2, JX: 2 }], ["main", { MA: 1, ME: 1, JX: 1 }]], {}],
    ["a stray pulse with no train about", KESTREL, "ME@5 MA@10 ME@20 JX@30", [["main", { MA: 1, ME: 1, JX: 1 }]], { ME: 1 }],
    ["a facing junction: the route is known at the points", WRENFOLD, "WA@0 WE@10 LX@15 LZ@30 WA@40 WE@50 TX@55 TZ@70", [["loop", { WA: 1, WE: 1, LX: 1, LZ: 1 }], ["through", { WA: 1, WE: 1, TX: 1, TZ: 1 }]], {}],
  ] as const)("%s", (_name, routes, script, trains, stray) => {
    const tracker = track([...routes], script);
    expect(tracker.trains.map((t) => [t.routes[0].id, t.counts])).toEqual(trains);
    expect(tracker.stray).toEqual(stray);
    expect(tracker.trains.every((t) => t.clearedAt !== null)).toBe(true);
  });

  it("follows a train whose axles cross a detector far apart (it stopped astride it)", () => {
    const tracker = track(KESTREL, "MA@0 MA@0.5 ME@10 ME@30 JX@40 JX@41");
    expect(tracker.trains.map((t) => t.counts)).toEqual([{ MA: 2, ME: 2, JX: 2 }]);
  });

  it("takes a train short of axles at its exit off the layout after a while", () => {
    const tracker = new TrainTracker(KESTREL);
    for (const [d, s] of [["MA", 0], ["MA", 0.5], ["ME", 10], ["ME", 10.5], ["JX", 20]] as const) tracker.pulse(d, s * 1000);
    tracker.advance(60_000);
    expect(tracker.trains[0].clearedAt).toBeNull();
    tracker.advance(81_000);
    expect(tracker.trains[0].clearedAt).toBe(20_000);
  });

  it("keeps a train in its section until its last axle has left", () => {
    const tracker = new TrainTracker(KESTREL);
    for (const [d, s] of [["MA", 0], ["MA", 0.5], ["ME", 10], ["ME", 10.5], ["JX", 20]] as const) tracker.pulse(d, s * 1000);
    const [train] = tracker.trains;
    expect(tracker.occupies(train)).toBe(true);
    tracker.pulse("JX", 20_500);
    expect(train.clearedAt).toBe(20_500);
    expect(tracker.occupies(train)).toBe(false);
  });
});

describe("report figures", () => {
  it.each([
    [[], null],
    [[3], 3],
    [[5, 1, 3], 3],
    [[4, 1, 3, 2], 2.5],
  ])("median of %j is %s", (values, expected) => expect(median(values)).toBe(expected));

  const base = (layout: ReturnType<typeof kestrelBankLayout>, inputs: EngineInput[]): ReportInputs => {
    const rulebook = rulebookSchema.parse(layout.rulebook);
    return {
      sessionId: 1,
      layout: { slug: layout.slug, name: layout.name },
      rulebookVersion: 1,
      rulebook,
      start: initialState(rulebook, 0),
      inputs: inputs.map((input, i) => ({ input, eventId: String(i + 1) })),
      from: 0,
      until: 600_000,
      open: true,
      importedFrom: null,
      detectors: layout.detectors,
      signals: layout.signals,
      nodes: layout.nodes,
      onlineAtStart: { junction: true },
      statuses: [{ node: "junction", at: 100_000, online: false }],
      notApplied: {},
      alarms: [],
    };
  };

  it("counts a board that never connected as offline all session, one that dropped from its drop", () => {
    const report = buildReport(base(kestrelBankLayout(), []));
    const byId = Object.fromEntries(report.nodes.map((n) => [n.id, n]));
    expect(byId["bank-foot"]).toMatchObject({ offlineS: 600, uptime: 0, neverConnected: true });
    expect(byId.junction).toMatchObject({ offlineS: 500, neverConnected: false });
  });

  it("judges a held priority signal as a check, marked held", () => {
    const report = buildReport(
      base(kestrelBankLayout(), [
        { type: "command", at: 1_000, command: "hold", signal: "M1", reason: "shunt" },
        { type: "pulse", detector: "MA", at: 5_000 },
        { type: "command", at: 25_000, command: "release", signal: "M1", reason: "done" },
      ]),
    );
    expect(report.checks).toEqual([expect.objectContaining({ train: 1, seconds: 20, held: true, inputIndex: 1, eventId: "2" })]);
    expect(report.routes[0].waitsS).toEqual([20]);
  });

  it("has no checks for a layout without a priority route", () => {
    const layout = wrenfoldLoopLayout();
    const report = buildReport({ ...base(layout, [{ type: "pulse", detector: "WA", at: 1_000 }]), onlineAtStart: {}, statuses: [] });
    expect(report.priorityRoute).toBeNull();
    expect(report.checks).toEqual([]);
    expect(report.trains).toHaveLength(1);
  });
});
