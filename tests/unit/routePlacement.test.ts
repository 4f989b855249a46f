import { describe, expect, it } from "vitest";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { approachDistance, modelMpsFromKmh, modelMpsFromMph } from "@shared/layout/placement";
import { checkRoutePlacement, type RoutePlacementInput } from "@shared/layout/routePlacement";

const layout = kestrelBankLayout();
const routes = layout.rulebook.proving!.routes;
/** A goods train at a scale 25 km/h; 1 s to react, 150 ms from pulse to lamp, gentle brakes. */
const GOODS = { speed: { prototypeKmh: 25 }, reactionS: 1, controllerLatencyMs: 150, decelerationMps2: 0.15 };

const check = (over: Partial<RoutePlacementInput> = {}) => checkRoutePlacement({ layout, routes, approach: GOODS, ...over });

describe("placement against the layout's own positions", () => {
  it("measures each route's approach detector to its signal and finds 10 m enough at 25 km/h", () => {
    const result = check();
    expect(result.required.totalM).toBeCloseTo(approachDistance({ ...GOODS, ratio: 22.5 }).totalM, 9);
    expect(result.routes.map((r) => [r.route, r.approach.detector, r.approach.ok])).toEqual([
      ["main", "MA", true],
      ["branch", "BA", true],
      ["shed", "SA", true],
    ]);
    // The shed road's approach is placed for its own, slower speed (kestrelShedRoad.ts), still enough at 25 km/h.
    expect(result.routes.map((r) => r.approach.actualM)).toEqual([10, 10, expect.closeTo(1.29, 9)]);
    expect(result.routes[0].approach.message).toMatch(/10\.00 m before signal M1/);
  });

  it.each([
    ["km/h", { prototypeKmh: 200 }],
    ["mph", { prototypeMph: 125 }],
    ["a timed run", { distanceM: 5, seconds: 2 }],
  ])("says a route is too short for a fast train given in %s, and by how much", (_name, speed) => {
    const result = check({ approach: { ...GOODS, speed } });
    expect(result.required.totalM).toBeGreaterThan(10);
    for (const route of result.routes) {
      expect(route.approach.ok).toBe(false);
      expect(route.approach.message).toMatch(/further back/);
    }
  });

  it("converts mph the same way as km/h (1 mph = 1.609344 km/h)", () => {
    expect(modelMpsFromMph(10, 22.5)).toBeCloseTo(modelMpsFromKmh(16.09344, 22.5), 12);
  });

  it("cannot measure a detector on another line than its signal, and says so", () => {
    const moved = { ...layout, detectors: layout.detectors.map((d) => (d.id === "BA" ? { ...d, line: "main" } : d)) };
    const branch = checkRoutePlacement({ layout: moved, routes, approach: GOODS }).routes[1];
    expect(branch.approach).toMatchObject({ actualM: null, ok: null });
    expect(branch.approach.message).toMatch(/measure the distance along the track/);
  });

  it("checks the clearance detector beyond the points against the rear overhang and the longest train", () => {
    const result = check({ clearance: { longestTrainM: 2.4, rearOverhangM: 0.15, nextStopAt: { main: 30 } } });
    const [main, branch, shed] = result.routes.map((r) => r.clearance!);
    expect(main).toMatchObject({ detector: "JX", foulingPointAt: 16, foulingPointFrom: "points P1", ok: true });
    expect(main.findings).toHaveLength(2);
    // The branch and the shed road join the main line: their exit is measured on the main line,
    // the same way up, from the bank points (nearer JX than the shed points).
    expect(branch).toMatchObject({ detector: "JX", foulingPointAt: 16, ok: true });
    expect(shed).toMatchObject({ detector: "JX", foulingPointAt: 16, foulingPointFrom: "points P1", ok: true });

    const tight = check({ clearance: { longestTrainM: 5, rearOverhangM: 4, foulingPointAt: { main: 17 }, nextStopAt: { main: 20 } } }).routes[0].clearance!;
    expect(tight).toMatchObject({ foulingPointAt: 17, foulingPointFrom: "given", ok: false });
    expect(tight.findings.map((f) => f.ok)).toEqual([false, false]);
  });

  it("asks for a fouling point when no points lie behind the clearance detector", () => {
    const noPoints = { ...layout, points: [] };
    const result = checkRoutePlacement({ layout: noPoints, routes, approach: GOODS, clearance: { longestTrainM: 2, rearOverhangM: 0.1 } });
    expect(result.routes[0].clearance).toMatchObject({ ok: null, foulingPointAt: null });
    expect(result.routes[0].clearance!.findings[0].message).toMatch(/no fouling point known/);
  });
});
