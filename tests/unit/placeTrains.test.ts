import { describe, expect, it } from "vitest";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { replayCounterexample, type Move } from "@shared/rulebook/prove";
import { placeTrains } from "../../src/lib/simulation";

const routes = kestrelBankLayout().rulebook.proving!.routes;

describe("placing counterexample trains on the mimic", () => {
  it.each([
    ["still approaching", { train: 1, route: "main", axles: 2, crossed: [0, 0] }, null, "leading axle past nothing yet"],
    ["leading axle past the approach", { train: 1, route: "main", axles: 2, crossed: [1, 0] }, "MA", "leading axle past MA; last axle past nothing yet"],
    ["straddling the signal", { train: 2, route: "branch", axles: 2, crossed: [2, 1] }, "BE", "leading axle past BA, BE; last axle past BA"],
    ["one axle, at the exit", { train: 3, route: "main", axles: 1, crossed: [3] }, "JX", "1 axle: leading axle past MA, ME, JX"],
  ])("%s", (_name, view, detector, words) => {
    const [placed] = placeTrains([view], routes);
    expect(placed.detector).toBe(detector);
    expect(placed.words).toContain(words);
  });

  it("follows a real replay of moves through the demo rulebook", () => {
    const moves: Move[] = [
      { type: "arrive", route: "main", axles: 1 },
      { type: "pulse", detector: "MA", route: "main", train: 1 },
    ];
    const replay = replayCounterexample(kestrelBankLayout().rulebook, moves);
    const placed = placeTrains(replay.steps[1].trains, routes);
    expect(placed).toEqual([expect.objectContaining({ train: 1, route: "main", detector: "MA" })]);
  });
});
