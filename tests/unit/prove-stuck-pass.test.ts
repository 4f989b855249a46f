/**
 * `no-stuck-train` is decided in one pass in progress order when every non-arrival edge lowers
 * the trains' remaining progress (or, for a quiet firing, the armed triggers), and by the
 * worklist otherwise (shared/rulebook/proving/stuck.ts). Both must give the same verdict and
 * the same counterexample, move for move: on random rulebooks, reduced and plain, and on the
 * templates. Hand-worked points can go round in circles, and then the worklist must be taken.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { prove, type ProofResult, type ProveOptions } from "@shared/rulebook/prove";
import type { Rulebook } from "@shared/rulebook/schema";
import { convergingJunction } from "@shared/rulebook/templates";
import { kestrelRoutes, wrenfoldFacing } from "../fixtures/junctions";
import { convergingRulebookArb, facingRulebookArb } from "../support/randomRulebooks";

const MAX_STATES = 40_000;

/** The `no-stuck-train` result with both passes; null when the search hit its limit. */
function bothPasses(rulebook: Rulebook, options: ProveOptions = {}): { ordered: ProofResult; worklist: ProofResult } | null {
  const ordered = prove(rulebook, { ...options, maxStates: MAX_STATES });
  if (ordered.stoppedBy !== undefined) return null;
  const worklist = prove(rulebook, { ...options, maxStates: MAX_STATES, stuckByWorklist: true });
  const stuck = (r: ProofResult) => r.properties.find((p) => p.id === "no-stuck-train");
  expect(stuck(ordered), JSON.stringify(rulebook)).toEqual(stuck(worklist));
  expect(worklist.stats.noStuckPass ?? "worklist").toBe("worklist");
  return { ordered, worklist };
}

describe("no-stuck-train: the pass in progress order agrees with the worklist", () => {
  it.each([
    ["reduced", {}],
    ["plain", { plain: true }],
  ])("on random converging junctions (%s search)", (_name, options) => {
    const samples = fc.sample(convergingRulebookArb({ maxAxles: 3, maxTrains: 2, priority: true }), { numRuns: 80, seed: 20261204 });
    const runs = samples.map((rb) => bothPasses(rb, options)).filter((r) => r !== null);
    expect(runs.length).toBeGreaterThan(50);
    // The comparison covers stuck trains found in progress order (random rulebooks are almost
    // never sound: the templates below cover proofs).
    const ordered = runs.filter((r) => r.ordered.stats.noStuckPass === "progress-order");
    const stuck = (r: ProofResult) => r.properties.find((p) => p.id === "no-stuck-train")!.holds;
    expect(ordered.filter((r) => stuck(r.ordered) === false).length).toBeGreaterThan(5);
  }, 240_000);

  it("on random facing junctions with points (the worklist wherever points moves go round)", () => {
    const samples = fc.sample(facingRulebookArb({ maxAxles: 3, maxTrains: 2 }), { numRuns: 80, seed: 20261205 });
    const runs = samples.map((rb) => bothPasses(rb)).filter((r) => r !== null);
    expect(runs.length).toBeGreaterThan(40);
    for (const pass of ["worklist", "progress-order"] as const) {
      expect(runs.filter((r) => r.ordered.stats.noStuckPass === pass).length, pass).toBeGreaterThan(4);
    }
  }, 240_000);

  it("on Kestrel Bank's three routes (progress order) and the Wrenfold Loop facing template (worklist)", () => {
    const kestrel = convergingJunction({ routes: kestrelRoutes(), order: "priority", priority: "main", maxAxles: 3, maxTrainsPerRoute: 2 });
    const k = bothPasses(kestrel)!;
    expect(k.ordered.verdict).toBe("proved");
    expect(k.ordered.stats.noStuckPass).toBe("progress-order");
    const w = bothPasses(wrenfoldFacing("hand", { maxAxles: 3, maxTrainsPerRoute: 2 }))!;
    expect(w.ordered.verdict).toBe("proved");
    expect(w.ordered.stats.noStuckPass).toBe("worklist");
  }, 120_000);
});
