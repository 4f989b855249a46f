/**
 * A rulebook small enough to explore by hand, so the prover's state count can be checked
 * against a count derived on paper.
 *
 * One route "up": approach UA, entry UE (at signal U1), exit UX. maxAxles 1, maxTrainsPerRoute 1.
 * Rules:
 *   approach    pass UA                  → show U1 clear
 *   enter       pass UE                  → show U1 danger
 *   line-quiet  quiet UX for 3000 ms     → alarm "line quiet" (changes no state)
 *
 * A prover state is (engine state, trains). The engine state that matters here is the wanted
 * aspect of U1 (danger/clear) and whether the quiet trigger of line-quiet is armed (its deadline
 * is abstracted away: an armed trigger may fire at any moment). The one train, if present, has
 * crossed 0, 1 or 2 of the path's 3 detectors (crossing the 3rd, UX, it leaves).
 *
 *   S0  no train,        U1 danger, not armed      (the start)
 *   S1  train crossed 0, U1 danger, not armed      S0 --arrive--> S1
 *   S2  train crossed 1, U1 clear,  not armed      S1 --UA-->     S2
 *   S3  train crossed 2, U1 danger, not armed      S2 --UE-->     S3   (U1 is clear, so it may pass)
 *   S4  no train,        U1 danger, armed          S3 --UX-->     S4   (UX arms line-quiet)
 *   S5  train crossed 0, U1 danger, armed          S4 --arrive--> S5,  S4 --quiet--> S0
 *   S6  train crossed 1, U1 clear,  armed          S5 --UA-->     S6,  S5 --quiet--> S1
 *   S7  train crossed 2, U1 danger, armed          S6 --UE-->     S7,  S6 --quiet--> S2
 *                                                  S7 --UX-->     S4 (re-armed: same state),
 *                                                  S7 --quiet-->  S3
 * No other move is possible: one axle, one train at a time, UE only while U1 is clear (which it
 * is whenever the train has crossed UA). So: 8 states and 12 transitions (1 each out of S0–S3,
 * 2 each out of S4–S7). Every property holds: one route (no conflicts), a single train, the
 * counterless rulebook cannot underflow or loop, and the only train that reaches its signal
 * (S2, S6) finds it clear, so no train waits at danger.
 *
 * That is the plain search (`plain: true`). The reduced search (the default) keeps no state with
 * a train that has crossed nothing: S1 and S5 go, and an arrival is fused with its UA crossing
 * (S0 → S2, S4 → S6; the one axle leaves no length open). So 6 states and 9 transitions:
 * S0 → S2, S2 → S3, S3 → S4, S4 → S6 and S4 → S0, S6 → S7 and S6 → S2, S7 → S4 and S7 → S3.
 */
import { describe, expect, it } from "vitest";
import { prove, replayCounterexample } from "@shared/rulebook/prove";
import { rulebookSchema } from "@shared/rulebook/schema";

const rulebook = rulebookSchema.parse({
  format: "blocklight.rulebook/1",
  initial: { U1: "danger" },
  rules: [
    { id: "approach", on: { pass: "UA" }, do: [{ show: "U1", aspect: "clear" }] },
    { id: "enter", on: { pass: "UE" }, do: [{ show: "U1", aspect: "danger" }] },
    { id: "line-quiet", on: { quiet: "UX", ms: 3000 }, do: [{ alarm: "line quiet" }] },
  ],
  proving: {
    routes: [{ id: "up", signal: "U1", approach: ["UA"], entry: "UE", exit: ["UX"] }],
    maxAxles: 1,
    maxTrainsPerRoute: 1,
  },
});

describe("a hand-worked proof", () => {
  it.each([
    ["plain", true, 8, 12],
    ["reduced", false, 6, 9],
  ] as const)("%s: explores exactly the states and transitions counted on paper", (_name, plain, states, transitions) => {
    const result = prove(rulebook, { plain });
    expect(result.stats.states).toBe(states);
    expect(result.stats.transitions).toBe(transitions);
    expect(result.verdict).toBe("proved");
    expect(result.properties.map((p) => [p.id, p.holds])).toEqual([
      ["settles", true],
      ["no-underflow", true],
      ["no-conflicting-proceeds", true],
      ["one-train-per-section", true],
      ["no-stuck-train", true],
    ]);
  });

  it("replays the path to S7 and back to S3 through the engine", () => {
    const replay = replayCounterexample(rulebook, [
      { type: "arrive", route: "up", axles: 1 },
      { type: "pulse", detector: "UA", route: "up", train: 1 },
      { type: "pulse", detector: "UE", route: "up", train: 1 },
      { type: "pulse", detector: "UX", route: "up", train: 1 },
      { type: "arrive", route: "up", axles: 1 },
      { type: "pulse", detector: "UA", route: "up", train: 2 },
      { type: "pulse", detector: "UE", route: "up", train: 2 },
      { type: "quiet", rule: "line-quiet" },
    ]);
    const last = replay.steps.at(-1)!;
    expect(last.shown.U1).toBe("danger");
    expect(last.trains).toEqual([{ train: 2, route: "up", axles: 1, crossed: [2] }]);
    expect(last.state.quiet).toEqual({});
    expect(last.changes).toContainEqual(expect.objectContaining({ kind: "alarm", rule: "line-quiet", detail: "line quiet" }));
    // The quiet firing happened at its real deadline: UX at t, deadline t + 3000.
    expect(last.timed).toBe(true);
    expect(last.input).toEqual({ type: "tick", at: replay.steps[3].input!.at + 3000 });
  });

  it("refuses a move the environment does not allow", () => {
    expect(() =>
      replayCounterexample(rulebook, [
        { type: "arrive", route: "up", axles: 1 },
        { type: "pulse", detector: "UE", route: "up", train: 1 },
      ]),
    ).toThrow(/no axle/);
  });
});
