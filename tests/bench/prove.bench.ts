/**
 * Prover figures (`npm run bench -- prove`), each with its states, states/s, peak JavaScript
 * heap and the machine's load average (other processes share the 2 cores: read the times with it):
 * - `prove.kestrel_bank_ms`: the demo's Kestrel Bank Junction as published (8 axles, 2 trains a route).
 * - `prove.kestrel_bank_8x3_ms`: the same at 3 trains a route (goal < 10 s). It proves with
 *   10,932,481 states in about 1 GB of search storage, but needs more CPU than the limit below
 *   allows when other work shares the cores; `…_verdict` says which: 1 proved, 0 unfinished.
 * - `prove.three_route_8x3_ms`: the three-route converging template at 8 axles × 3 trains (same),
 *   and `prove.three_route_3x2_ms`, the largest three-route case that finishes quickly.
 * - `prove.wrenfold_power_ms`, `prove.wrenfold_hand_ms`: the facing template as at Wrenfold Loop
 *   (8 axles × 3 trains), power- and hand-worked points.
 * - `spin.*_ms`: SPIN 6.5.2 (Debian package spin) on the same model, `spin -a` + gcc -O2 -DSAFETY
 *   + pan, where the Promela model covers it (not the points environment yet: no Wrenfold figure);
 *   `spin.*_complete` is 0 when pan ran out of memory (1 GB) or depth, so its time is not a proof.
 */
import os from "node:os";
import { kestrelBankLayout } from "../../shared/demo/fernmoor";
import { toPromela } from "../../shared/rulebook/promela";
import { prove } from "../../shared/rulebook/prove";
import type { Rulebook } from "../../shared/rulebook/schema";
import { convergingJunction, facingJunction } from "../../shared/rulebook/templates";
import { runSpin, spinAvailable } from "../support/spin";
import type { Report } from "./run";

const now = (): number => performance.now();
/** Past this a proof is reported unfinished: the server's own limit. */
const BENCH_PROOF_MAX_MS = 60_000;
/** SPIN (compile + every pan run) is stopped after this and reported incomplete. */
const BENCH_SPIN_MAX_MS = 120_000;

function threeRoutes(maxAxles: number, maxTrainsPerRoute: number): Rulebook {
  return convergingJunction({
    routes: [
      { id: "up", signal: "U1", approach: ["UA"], entry: "UE", exit: ["JX"] },
      { id: "down", signal: "D1", approach: ["DA"], entry: "DE", exit: ["JX"] },
      { id: "goods", signal: "G1", approach: ["GA"], entry: "GE", exit: ["JX"] },
    ],
    order: "priority",
    priority: "up",
    maxAxles,
    maxTrainsPerRoute,
  });
}

function wrenfold(worked: "power" | "hand"): Rulebook {
  return facingJunction({
    signal: "W1",
    approach: ["WA"],
    entry: "WE",
    points: "P2",
    roads: [
      { id: "through", exit: ["TX", "TZ"] },
      { id: "loop", exit: ["LX", "LZ"] },
    ],
    worked,
    maxAxles: 8,
    maxTrainsPerRoute: 3,
  });
}

function withTrains(rulebook: Rulebook, maxAxles: number, maxTrainsPerRoute: number): Rulebook {
  return { ...rulebook, proving: { ...rulebook.proving!, maxAxles, maxTrainsPerRoute } };
}

/** One proof, with its figures under `name`. */
function measure(report: Report, name: string, rulebook: Rulebook, points?: Record<string, "power" | "hand">): void {
  let peakHeap = process.memoryUsage().heapUsed;
  const load = os.loadavg()[0];
  const cpu = process.cpuUsage();
  const result = prove(rulebook, {
    now,
    maxMs: BENCH_PROOF_MAX_MS,
    points,
    onProgress: () => (peakHeap = Math.max(peakHeap, process.memoryUsage().heapUsed)),
  });
  const cpuMs = (process.cpuUsage(cpu).user + process.cpuUsage(cpu).system) / 1000;
  if (result.verdict === "refuted") throw new Error(`${name} refuted: ${JSON.stringify(result.properties.filter((p) => p.holds === false))}`);
  report(`${name}_ms`, result.stats.ms, "ms");
  report(`${name}_cpu_ms`, cpuMs, "ms");
  report(`${name}_verdict`, result.verdict === "proved" ? 1 : 0, result.verdict + (result.stoppedBy ? ` (stopped by ${result.stoppedBy})` : ""));
  report(`${name}_states`, result.stats.states, "states");
  report(`${name}_states_per_s`, Math.round(result.stats.states / (result.stats.ms / 1000)), "states/s");
  report(`${name}_peak_heap_mb`, peakHeap / 1048576, "MB");
  report(`${name}_search_mb`, result.stats.bytes / 1048576, "MB");
  report(`${name}_load_avg`, load, "");
}

/** `states`: the plain search's count where known (sizes pan's depth and hash table). */
async function measureSpin(report: Report, name: string, rulebook: Rulebook, states?: number): Promise<void> {
  const started = now();
  const spin = await runSpin(toPromela(rulebook), { optimise: true, states, timeoutMs: BENCH_SPIN_MAX_MS });
  report(`spin.${name}_ms`, now() - started, "ms");
  report(`spin.${name}_complete`, spin.complete ? 1 : 0, spin.complete ? `complete, ${spin.errors} errors` : "incomplete (memory or depth)");
  report(`spin.${name}_states`, spin.states, "states");
  report(`spin.${name}_load_avg`, os.loadavg()[0], "");
}

export async function run(report: Report): Promise<void> {
  const kestrel = kestrelBankLayout().rulebook as Rulebook;
  // Warm up the JIT on a small case: the figures are the prover's, not V8's start-up.
  for (let i = 0; i < 5; i++) prove(withTrains(kestrel, 2, 2));

  measure(report, "prove.kestrel_bank", kestrel);
  measure(report, "prove.kestrel_bank_8x3", withTrains(kestrel, 8, 3));
  measure(report, "prove.three_route_3x2", threeRoutes(3, 2));
  measure(report, "prove.three_route_8x3", threeRoutes(8, 3));
  measure(report, "prove.wrenfold_power", wrenfold("power"), { P2: "power" });
  measure(report, "prove.wrenfold_hand", wrenfold("hand"), { P2: "hand" });

  if (await spinAvailable()) {
    // Plain state counts measured with `plain: true` (docs/prover.md); unknown for 8 × 3.
    await measureSpin(report, "kestrel_bank", kestrel, 9_800_000);
    await measureSpin(report, "kestrel_bank_8x3", withTrains(kestrel, 8, 3), 100_000_000);
    await measureSpin(report, "three_route_3x2", threeRoutes(3, 2), 1_327_147);
    await measureSpin(report, "three_route_8x3", threeRoutes(8, 3), 100_000_000);
  }
}
