/**
 * Prover figures (`npm run bench -- prove`):
 * - `prove.kestrel_bank_ms`: the demo's Kestrel Bank Junction (2 routes, 2 axles, 2 trains a route). Goal < 200 ms.
 * - `prove.three_route_ms`, `prove.three_route_states`: a three-route converging template with
 *   maxAxles 3 and 2 trains a route. Goal < 10 s.
 * - `prove.states_per_s`: states explored per second on the three-route run. Goal ≥ 200,000.
 * - `spin.kestrel_bank_ms`: SPIN 6.5.2 (Debian package spin) on the same Kestrel Bank model,
 *   including `spin -a` and compiling pan (-O2), which is most of its time; skipped without spin.
 */
import { kestrelBankLayout } from "../../shared/demo/fernmoor";
import { toPromela } from "../../shared/rulebook/promela";
import { prove } from "../../shared/rulebook/prove";
import type { Rulebook } from "../../shared/rulebook/schema";
import { convergingJunction } from "../../shared/rulebook/templates";
import { runSpin, spinAvailable } from "../support/spin";

const now = (): number => performance.now();

function threeRoutes(): Rulebook {
  return convergingJunction({
    routes: [
      { id: "up", signal: "U1", approach: ["UA"], entry: "UE", exit: ["JX"] },
      { id: "down", signal: "D1", approach: ["DA"], entry: "DE", exit: ["JX"] },
      { id: "goods", signal: "G1", approach: ["GA"], entry: "GE", exit: ["JX"] },
    ],
    order: "priority",
    priority: "up",
    maxAxles: 3,
    maxTrainsPerRoute: 2,
  });
}

export async function run(report: (name: string, value: number, unit: string) => void): Promise<void> {
  const kestrel = kestrelBankLayout().rulebook as Rulebook;

  // Warm up the JIT, then take the best of five: the figure is the prover's, not V8's start-up.
  for (let i = 0; i < 10; i++) prove(kestrel);
  let best = Infinity;
  for (let i = 0; i < 5; i++) {
    const result = prove(kestrel, { now });
    if (result.verdict !== "proved") throw new Error(`Kestrel Bank is not proved: ${JSON.stringify(result.properties)}`);
    best = Math.min(best, result.stats.ms);
  }
  report("prove.kestrel_bank_ms", best, "ms");

  const three = prove(threeRoutes(), { now });
  if (three.verdict !== "proved") throw new Error(`three-route template not proved: ${three.reason ?? three.verdict}`);
  report("prove.three_route_ms", three.stats.ms, "ms");
  report("prove.three_route_states", three.stats.states, "states");
  report("prove.states_per_s", Math.round(three.stats.states / (three.stats.ms / 1000)), "states/s");

  if (await spinAvailable()) {
    const started = now();
    const spin = await runSpin(toPromela(kestrel), { optimise: true });
    if (!spin.complete || spin.errors !== 0) throw new Error(`SPIN did not prove Kestrel Bank:\n${spin.output}`);
    report("spin.kestrel_bank_ms", now() - started, "ms");
  }
}
