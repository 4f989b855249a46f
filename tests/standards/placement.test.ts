/**
 * Placement arithmetic checked against published values (design folder REFERENCES.md).
 */
import { describe, expect, it } from "vitest";
import {
  approachDistance,
  checkClearance,
  decelerationFromStop,
  modelMpsFromKmh,
  prototypeKmh,
  prototypeMph,
  scaleSpeedFromTiming,
} from "@shared/layout/placement";

const INCH_M = 0.0254;

describe("scale speed", () => {
  it("matches the published worked example: 18 in in 5.2 s at 1:87.1 is 17.1 scale mph (manufacturer's forum, linear method)", () => {
    const { prototypeMph: mph } = scaleSpeedFromTiming(18 * INCH_M, 5.2, 87.1);
    expect(mph).toBeCloseTo(17.1, 1);
  });

  it("matches the hobby's rule of thumb: 1 in/s is about 5 HO mph", () => {
    expect(prototypeMph(INCH_M, 87.1)).toBeCloseTo(5, 0);
  });

  it("HO from its definition, 3.5 mm to 1 ft, is about 1:87.1 (NMRA S-1.2)", () => {
    const ratio = 304.8 / 3.5;
    expect(ratio).toBeCloseTo(87.1, 1);
  });

  it.each([
    ["G / II, 1:22.5 (NEM 010)", 22.5],
    ["I, 1:32 (NEM 010)", 32],
    ["1:20.3 (NMRA Large Scale report)", 20.3],
  ])("km/h → model m/s → km/h round-trips at %s", (_name, ratio) => {
    expect(prototypeKmh(modelMpsFromKmh(40, ratio), ratio)).toBeCloseTo(40, 9);
  });

  it("refuses a zero timing", () => {
    expect(() => scaleSpeedFromTiming(1, 0, 22.5)).toThrow(/longer than 0/);
  });
});

describe("approach distance (textbook kinematics: reaction v·t, braking v²/(2a))", () => {
  it("adds latency, reaction and braking distances", () => {
    const result = approachDistance({ ratio: 22.5, speed: { modelMps: 2 }, reactionS: 1, controllerLatencyMs: 250, decelerationMps2: 0.5, marginM: 0.3 });
    expect(result.latencyM).toBeCloseTo(0.5, 12);
    expect(result.reactionM).toBeCloseTo(2, 12);
    expect(result.brakingM).toBeCloseTo(4, 12);
    expect(result.totalM).toBeCloseTo(6.8, 12);
  });

  it("a deceleration measured from a stop gives back that stopping distance as the braking part", () => {
    const a = decelerationFromStop(0.8, 1.6);
    const result = approachDistance({ ratio: 22.5, speed: { modelMps: 0.8 }, reactionS: 0, controllerLatencyMs: 0, decelerationMps2: a });
    expect(result.brakingM).toBeCloseTo(1.6, 12);
  });

  it("doubling the speed quadruples the braking distance", () => {
    const slow = approachDistance({ ratio: 22.5, speed: { prototypeKmh: 20 }, reactionS: 1, controllerLatencyMs: 100, decelerationMps2: 0.2 });
    const fast = approachDistance({ ratio: 22.5, speed: { prototypeKmh: 40 }, reactionS: 1, controllerLatencyMs: 100, decelerationMps2: 0.2 });
    expect(fast.brakingM / slow.brakingM).toBeCloseTo(4, 9);
    expect(fast.reactionM / slow.reactionM).toBeCloseTo(2, 9);
  });

  it("refuses a zero deceleration", () => {
    expect(() => approachDistance({ ratio: 22.5, speed: { modelMps: 1 }, reactionS: 1, controllerLatencyMs: 0, decelerationMps2: 0 })).toThrow();
  });
});

describe("clearance detector (a train is clear of a junction only when its last vehicle is)", () => {
  it.each([
    ["beyond fouling point by more than the overhang", 20, 20.4, 0.2, true],
    ["exactly at the overhang", 20, 20.2, 0.2, true],
    ["short of the overhang: counted clear while still foul", 20, 20.1, 0.2, false],
    ["before the fouling point", 20, 19.5, 0.2, false],
  ])("%s", (_name, fouling, detector, overhang, ok) => {
    const { findings } = checkClearance({ foulingPointAt: fouling, clearanceDetectorAt: detector, rearOverhangM: overhang, longestTrainM: 3 });
    expect(findings[0].ok).toBe(ok);
  });

  it("flags a longest train that cannot stand clear before its next stop", () => {
    const { findings, roomBeyondM } = checkClearance({ foulingPointAt: 20, clearanceDetectorAt: 20.5, rearOverhangM: 0.2, longestTrainM: 4, nextStopAt: 23 });
    expect(roomBeyondM).toBe(3);
    expect(findings[1].ok).toBe(false);
  });

  it("works for trains running down the line's metres", () => {
    const { findings } = checkClearance({ foulingPointAt: 20, clearanceDetectorAt: 19.5, rearOverhangM: 0.2, longestTrainM: 3, direction: "down" });
    expect(findings[0].ok).toBe(true);
  });
});
