/**
 * The reduced search (the default: lazy arrival and lazy length, shared/rulebook/proving/
 * environment.ts) against the plain §5 search (`plain: true`) on random rulebooks: the same
 * verdict on every property and, for every refuted one, a counterexample of the same length —
 * the shortest — that replays through the engine to a state or step that breaks the property.
 * A disagreement prints the rulebook.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { prove, replayCounterexample, type ProofResult, type PropertyId } from "@shared/rulebook/prove";
import { deferrableGroups } from "@shared/rulebook/proving/deferral";
import { compileModel } from "@shared/rulebook/proving/model";
import { rulebookSchema, type Rulebook } from "@shared/rulebook/schema";
import { convergingJunction, facingJunction } from "@shared/rulebook/templates";
import { convergingRulebookArb, countingRulebookArb, facingRulebookArb } from "../support/randomRulebooks";

/** Rulebooks whose plain state space is bigger than this are left out (the plain search is slow). */
const PLAIN_MAX_STATES = 40_000;

interface Compared {
  refuted: PropertyId[];
  lazyLength: boolean;
  /** Some group's stream axles were deferred (deferral.ts). */
  deferred: boolean;
}

function compare(rulebook: Rulebook): Compared | null {
  const plain = prove(rulebook, { plain: true, maxStates: PLAIN_MAX_STATES });
  // Only rulebooks the plain search decides completely (a refutation may come before its limit).
  if (plain.stoppedBy !== undefined) return null;
  const reduced = prove(rulebook);
  const where = `on\n${JSON.stringify(rulebook)}`;
  expect(reduced.verdict, where).toBe(plain.verdict);
  expect(summary(reduced), where).toEqual(summary(plain));
  for (const p of reduced.properties) {
    if (p.holds !== false) continue;
    const replay = replayCounterexample(rulebook, p.counterexample!);
    const broken = replay.steps.length === 0 ? replay.initialViolates : replay.steps.at(-1)!.violates;
    expect(broken, `${p.id} ${JSON.stringify(p.counterexample)} ${where}`).toContain(p.id);
  }
  // Fewer states than the plain search, never more (the reductions only merge and drop states).
  expect(reduced.stats.states).toBeLessThanOrEqual(plain.stats.states);
  return {
    refuted: reduced.properties.filter((p) => p.holds === false).map((p) => p.id),
    lazyLength: rulebook.proving!.maxAxles > 1,
    // From the model: a proof that finds a stuck candidate answers from a second search without deferral.
    deferred: deferrableGroups(compileModel(rulebook)) !== 0,
  };
}

/** Per property: holds, and the counterexample's length when refuted. */
function summary(result: ProofResult): [PropertyId, boolean | null, number | undefined][] {
  return result.properties.map((p) => [p.id, p.holds, p.counterexample?.length]);
}

describe("the reduced search agrees with the plain search", () => {
  it("on random converging junctions (rulebook /1, up to 3 axles, 2 trains a route, with and without priority)", () => {
    const samples = fc.sample(convergingRulebookArb({ maxAxles: 3, maxTrains: 2, priority: true }), { numRuns: 160, seed: 20261202 });
    const seen = samples.map(compare).filter((c): c is Compared => c !== null);
    expect(seen.length).toBeGreaterThan(100);
    // The comparison must cover every property's refutation with trains whose length is open
    // (random rulebooks are almost never sound: the templates below cover proofs).
    for (const id of ["no-stuck-train", "no-conflicting-proceeds", "one-train-per-section", "no-underflow", "priority-unhindered"] as const) {
      expect(seen.filter((c) => c.lazyLength && c.refuted.includes(id)).length, id).toBeGreaterThan(0);
    }
  }, 240_000);

  it("on random converging junctions with 3 trains a route (streams of several trains, lazy split)", () => {
    const samples = fc.sample(convergingRulebookArb({ maxAxles: 2, maxTrains: 3, priority: true }), { numRuns: 80, seed: 20261206 });
    const seen = samples.map(compare).filter((c): c is Compared => c !== null);
    expect(seen.length).toBeGreaterThan(40);
    for (const id of ["no-stuck-train", "no-conflicting-proceeds", "one-train-per-section", "no-underflow"] as const) {
      expect(seen.filter((c) => c.refuted.includes(id)).length, id).toBeGreaterThan(0);
    }
  }, 240_000);

  it("on random counting junctions, where stream axles are deferred (up to 3 axles, 3 trains a route)", () => {
    const samples = fc.sample(countingRulebookArb({ maxAxles: 3, maxTrains: 3 }), { numRuns: 160, seed: 20261207 });
    const seen = samples.map(compare).filter((c): c is Compared => c !== null);
    const deferred = seen.filter((c) => c.deferred);
    expect(seen.length).toBeGreaterThan(100);
    expect(deferred.length).toBeGreaterThan(60);
    // Deferral on and off both met (added rules that tell "one" from "more" turn it off).
    expect(seen.length - deferred.length).toBeGreaterThan(5);
    for (const id of ["no-stuck-train", "no-conflicting-proceeds", "one-train-per-section", "priority-unhindered"] as const) {
      expect(deferred.filter((c) => c.refuted.includes(id)).length, id).toBeGreaterThan(0);
    }
    expect(deferred.filter((c) => c.refuted.length === 0).length, "proved with deferral").toBeGreaterThan(0);
  }, 240_000);

  it("with deferral and without, past the plain search's reach (4 axles, 3 trains a route)", () => {
    const samples = fc.sample(countingRulebookArb({ maxAxles: 4, maxTrains: 3 }), { numRuns: 40, seed: 20261208 });
    let deferred = 0;
    for (const rulebook of samples) {
      const all = prove(rulebook, { noDeferral: true, maxStates: 400_000 });
      if (all.stoppedBy !== undefined) continue;
      const fewer = prove(rulebook);
      const where = `on\n${JSON.stringify(rulebook)}`;
      expect(summary(fewer), where).toEqual(summary(all));
      expect(fewer.stats.states).toBeLessThanOrEqual(all.stats.states);
      if ((fewer.stats.deferredGroups ?? 0) > 0) deferred++;
    }
    expect(deferred).toBeGreaterThan(15);
  }, 240_000);

  it("on random facing junctions with points (rulebook /2, power and hand, up to 3 axles, 2 trains)", () => {
    const samples = fc.sample(facingRulebookArb({ maxAxles: 3, maxTrains: 2 }), { numRuns: 120, seed: 20261203 });
    const seen = samples.map(compare).filter((c): c is Compared => c !== null);
    expect(seen.length).toBeGreaterThan(80);
    for (const id of ["points-set-for-train", "points-locked", "no-stuck-train"] as const) {
      expect(seen.filter((c) => c.lazyLength && c.refuted.includes(id)).length, id).toBeGreaterThan(0);
    }
  }, 240_000);

  const TWO_ROUTES = [
    { id: "main", signal: "M1", approach: ["MA"], entry: "ME", exit: ["JX"] },
    { id: "branch", signal: "B1", approach: ["BA"], entry: "BE", exit: ["JX"] },
  ];
  const facing = (worked: "power" | "hand") =>
    facingJunction({
      signal: "W1",
      approach: ["WA"],
      entry: "WE",
      points: "P1",
      worked,
      roads: [
        { id: "through", exit: ["TX", "TZ"] },
        { id: "loop", exit: ["LX", "LZ"] },
      ],
      maxAxles: 3,
      maxTrainsPerRoute: 2,
    });
  it.each([
    ["converging, priority, 3 axles × 2 trains", convergingJunction({ routes: TWO_ROUTES, order: "priority", priority: "main", maxAxles: 3, maxTrainsPerRoute: 2 })],
    ["converging, first-come, 2 axles × 3 trains", convergingJunction({ routes: TWO_ROUTES, order: "first-come", maxAxles: 2, maxTrainsPerRoute: 3 })],
    ["facing, power-worked, 3 axles × 2 trains", facing("power")],
    ["facing, hand-worked, 3 axles × 2 trains", facing("hand")],
  ])("on the template %s: both prove it", (_name, rulebook) => {
    expect(prove(rulebook, { plain: true }).verdict).toBe("proved");
    expect(compare(rulebook)?.refuted).toEqual([]);
  });

  /**
   * The signal clears once two axles are counted on the approach, so a one-axle train waits for
   * ever. In the reduced search that train is, after its first axle, an open train that might
   * still have more axles: the state is stuck for one of the trains it stands for, not for all.
   */
  const countsTwo = (withOther: boolean): Rulebook =>
    rulebookSchema.parse({
      format: "blocklight.rulebook/1",
      counters: { n: 0 },
      initial: { U1: "danger", O1: "danger" },
      rules: [
        { id: "count", on: { pass: "UA" }, if: { count: "n", op: "<", value: 3 }, do: [{ add: "n", by: 1 }] },
        { id: "clear", on: "standing", if: { count: "n", op: "==", value: 2 }, do: [{ show: "U1", aspect: "clear" }] },
        { id: "enter", on: { pass: "UE" }, do: [{ zero: "n" }, { show: "U1", aspect: "danger" }] },
        { id: "other", on: { pass: "OA" }, do: [{ show: "O1", aspect: "clear" }] },
        { id: "other-in", on: { pass: "OE" }, do: [{ show: "O1", aspect: "danger" }] },
      ],
      proving: {
        // With the other route listed first, the counted route is the second group (its hidden
        // lengths sit higher in the bit sets).
        routes: [
          ...(withOther ? [{ id: "other", signal: "O1", approach: ["OA"], entry: "OE", exit: ["OX"] }] : []),
          { id: "up", signal: "U1", approach: ["UA"], entry: "UE", exit: ["UX"] },
        ],
        maxAxles: 3,
        maxTrainsPerRoute: 1,
      },
    });
  it.each([
    ["alone", false],
    ["behind another route", true],
  ])("finds the one-axle train stuck where a longer train is not (%s)", (_name, withOther) => {
    const rulebook = countsTwo(withOther);
    expect(compare(rulebook)?.refuted).toEqual(["no-stuck-train"]);
    const stuck = prove(rulebook).properties.find((p) => p.id === "no-stuck-train")!;
    expect(stuck.counterexample).toEqual([
      { type: "arrive", route: "up", axles: 1 },
      { type: "pulse", detector: "UA", route: "up", train: 1 },
    ]);
  });
});
