/**
 * The what-if comparison: the same session inputs through two rulebooks, aspects compared
 * step by step; and where a what-if run starts.
 */
import { describe, expect, it } from "vitest";
import { kestrelTwoRoutesLayout } from "../fixtures/kestrelTwoRoutes";
import type { EngineInput } from "@shared/rulebook/engine";
import type { Rulebook } from "@shared/rulebook/schema";
import { carryStartState, compareRuns, playbackDelayMs, runSession } from "../../src/lib/replay";
import { startEntry } from "../../src/lib/simulation";

const base = (): Rulebook => kestrelTwoRoutesLayout().rulebook;

/** A draft that never gives the branch a proceed: the branch signal stays at danger. */
function branchNeverClears(): Rulebook {
  const rulebook = base();
  return { ...rulebook, rules: rulebook.rules.filter((r) => r.id !== "give-branch") };
}

const T0 = Date.UTC(2026, 4, 2, 10, 15, 0);
const pulse = (detector: string, s: number): EngineInput => ({ type: "pulse", detector, at: T0 + s * 1000 });

/** A main-line train, then a quarry-branch train, each with two axles. */
const inputs: EngineInput[] = [
  pulse("MA", 0),
  pulse("MA", 1),
  pulse("ME", 10),
  pulse("ME", 11),
  pulse("JX", 20),
  pulse("JX", 21),
  pulse("BA", 40),
  pulse("BA", 41),
  pulse("BE", 50),
  pulse("BE", 51),
  pulse("JX", 60),
  pulse("JX", 61),
];

describe("compareRuns", () => {
  const start = startEntry(base()).state;
  const recorded = runSession(base(), start, inputs);

  it("finds no difference when the what-if rulebook is the recorded one", () => {
    const same = runSession(base(), carryStartState(base(), start), inputs);
    const diff = compareRuns(base(), recorded, base(), same);
    expect(diff).toEqual({ differences: new Map(), first: null, count: 0 });
  });

  it("marks the first differing step, counts the differing steps and names the signals", () => {
    const draft = branchNeverClears();
    const whatIf = runSession(draft, carryStartState(draft, start), inputs);
    const diff = compareRuns(base(), recorded, draft, whatIf);
    // Step 7 is the first branch axle on BA: the recorded run clears B1 there.
    expect(diff.first).toBe(7);
    expect(diff.differences.get(7)).toEqual([{ signal: "B1", recorded: "clear", whatIf: "danger" }]);
    // B1 shows clear in the recorded run from the first BA until the branch train enters at BE.
    const steps = [...diff.differences.keys()];
    expect(steps).toEqual([7, 8]);
    expect(diff.count).toBe(2);
    for (const i of [0, 1, 2, 6, 9, 12]) expect(diff.differences.has(i)).toBe(false);
  });

  it("counts a signal one rulebook does not know as dark", () => {
    const rulebook = base();
    // The smallest sound rulebook: M1 alone, always at danger.
    const noBranchSignal: Rulebook = { format: "blocklight.rulebook/1", latches: {}, counters: {}, selectors: {}, initial: { M1: "danger" }, rules: [] };
    const whatIf = runSession(noBranchSignal, carryStartState(noBranchSignal, start), inputs.slice(0, 2));
    const diff = compareRuns(rulebook, recorded.slice(0, 3), noBranchSignal, whatIf);
    expect(diff.differences.get(0)).toEqual([{ signal: "B1", recorded: "danger", whatIf: "dark" }]);
  });

  it("refuses runs of different lengths", () => {
    expect(() => compareRuns(base(), recorded, base(), recorded.slice(1))).toThrow(/steps/);
  });
});

describe("carryStartState", () => {
  it("keeps what the other rulebook also declares, so a train already on the approach stays counted", () => {
    const recordedStart = runSession(base(), startEntry(base()).state, inputs.slice(0, 2)).at(-1)!.state;
    expect(recordedStart.counters.mainApproach).toBe(2);
    const draft = branchNeverClears();
    const carried = carryStartState(draft, { ...recordedStart, held: ["B1", "X9"], quiet: { "no-such-rule": 5 } });
    expect(carried.counters.mainApproach).toBe(2);
    expect(carried.selectors.route).toBe("main");
    expect(carried.wanted.M1).toBe("clear");
    expect(carried.held).toEqual(["B1"]);
    expect(carried.quiet).toEqual({});
    expect(carried.clock).toBe(recordedStart.clock);
  });
});

describe("playbackDelayMs", () => {
  const entries = runSession(base(), startEntry(base()).state, inputs);
  it.each([
    [1, 1, 1000],
    [1, 10, 100],
    [1, 100, 10],
    [2, 1, 2000], // a 9 s gap is shortened to the longest wait
    [2, 10, 900],
    [0, 1, 0], // the start entry has no time of its own
    [12, 1, 0], // the last step has no next
  ] as const)("after step %i at %i× waits %i ms", (index, speed, ms) => {
    expect(playbackDelayMs(entries, index, speed)).toBe(ms);
  });
});
