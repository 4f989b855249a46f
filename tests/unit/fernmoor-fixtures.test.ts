import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { kestrelBankLayout, wrenfoldLoopLayout } from "@shared/demo/fernmoor";
import {
  SHED_ENGINE_FRONT_OVERHANG_M,
  SHED_ENGINE_STOP_M,
  SHED_FOULING_POINT_AT_M,
  SHED_POINTS_MAIN_AT_M,
  SHED_ROAD_APPROACH,
  SHED_ROAD_KMH,
} from "@shared/demo/kestrelShedRoad";
import { checkRoutePlacement } from "@shared/layout/routePlacement";
import { validateLayoutFile } from "@shared/rulebook/validate";

const fixture = (name: string): unknown => JSON.parse(readFileSync(new URL(`../fixtures/${name}`, import.meta.url), "utf8"));

describe("Fernmoor demo fixtures", () => {
  it.each([
    ["kestrel-bank.layout.json", kestrelBankLayout],
    ["wrenfold-loop.layout.json", wrenfoldLoopLayout],
  ])("%s equals the demo function's output and validates", (name, make) => {
    const file = fixture(name);
    // To refresh after a deliberate change: write JSON.stringify(make(), null, 2) + "\n" to the fixture.
    expect(file).toEqual(JSON.parse(JSON.stringify(make())));
    expect(validateLayoutFile(file).ok).toBe(true);
  });

  it("places approach detectors about 10 m before their signal, entry level with it", () => {
    const layout = kestrelBankLayout();
    const at = (id: string) => [...layout.detectors, ...layout.signals].find((item) => item.id === id)!.at;
    expect(at("M1") - at("MA")).toBeCloseTo(10);
    expect(at("B1") - at("BA")).toBeCloseTo(10);
    expect(at("ME")).toBe(at("M1"));
    expect(at("JX")).toBeGreaterThan(layout.points[0].at);
  });

  it("places the shed road by the placement arithmetic: the approach distance for its speed, the signal an overlap before the fouling point", () => {
    const layout = kestrelBankLayout();
    const at = (id: string) => [...layout.detectors, ...layout.signals, ...layout.points].find((item) => item.id === id)!.at;
    const shed = layout.rulebook.proving!.routes.find((r) => r.id === "shed")!;
    expect(shed).toEqual({ id: "shed", signal: "S1", approach: ["SA"], entry: "SE", exit: ["JX"] });
    const { ratio: _ratio, ...approach } = SHED_ROAD_APPROACH;
    const [placed] = checkRoutePlacement({ layout, routes: [shed], approach, clearance: { longestTrainM: 2, rearOverhangM: 0.12 } }).routes;
    // Enough, and no more than the centimetre the position was rounded by.
    expect(placed.approach.ok).toBe(true);
    expect(placed.approach.actualM! - placed.approach.requiredM).toBeGreaterThanOrEqual(0);
    expect(placed.approach.actualM! - placed.approach.requiredM).toBeLessThan(0.01);
    expect(placed.clearance).toMatchObject({ detector: "JX", foulingPointFrom: "points P1", ok: true });
    // The braking distance at the shed-road speed is the measured stop; S1 stands that far, and the
    // engine's front overhang, before the fouling point (to the centimetre, towards the shed).
    expect(SHED_ROAD_APPROACH.speed).toEqual({ prototypeKmh: SHED_ROAD_KMH });
    const overlap = SHED_FOULING_POINT_AT_M - at("S1");
    expect(overlap).toBeGreaterThanOrEqual(SHED_ENGINE_STOP_M + SHED_ENGINE_FRONT_OVERHANG_M - 1e-9);
    expect(overlap).toBeLessThan(SHED_ENGINE_STOP_M + SHED_ENGINE_FRONT_OVERHANG_M + 0.01);
    expect(at("SE")).toBe(at("S1"));
    // The shed road joins the main line between the main home signal and the bank points.
    expect(at("P3")).toBe(SHED_POINTS_MAIN_AT_M);
    expect(at("M1")).toBeLessThan(at("P3"));
    expect(at("P3")).toBeLessThan(at("P1"));
    expect(layout.nodes.find((n) => n.id === "shed")).toMatchObject({ detectors: ["SA", "SE"], signals: ["S1"] });
  });
});
