/**
 * Prover figures (`npm run bench -- prove`), each with its states, states/s, peak JavaScript
 * heap and the machine's load average (other processes share the 2 cores: read the times with it):
 * - `prove.kestrel_bank_ms`: the demo's Kestrel Bank Junction as published (three routes since
 *   its loco-shed road: main, branch, shed; since 2026-12-03 8 axles × 3 trains a route).
 * - `prove.kestrel_bank_8x3_ms`: the same at 8 axles × 3 trains a route (goal < 10 s; now the
 *   same proof as the demo's, kept so the figure compares with earlier runs);
 *   `…_verdict` says whether it finished: 1 proved, 0 unfinished.
 * - `prove.kestrel_two_route_8x2_ms` / `_8x3_ms`: Kestrel Bank as issue 13 measured it, before
 *   the shed road (tests/fixtures/kestrelTwoRoutes.ts).
 * - `prove.three_route_8x3_ms`: the three-route converging template at 8 axles × 3 trains,
 *   and `prove.three_route_3x2_ms`, a small three-route case.
 * - `…_deferred_groups`: how many groups' stream axles waited until their group was ready
 *   (shared/rulebook/proving/deferral.ts); 0 where the rulebook does not allow it.
 * - `prove.wrenfold_power_ms`, `prove.wrenfold_hand_ms`: the facing template as at Wrenfold Loop
 *   (8 axles × 3 trains), power- and hand-worked points.
 * - `spin.*`: SPIN 6.5.2 (Debian package spin) on the same rulebook and §5 environment (the
 *   Promela model of shared/rulebook/promela.ts, points included), exhaustive (tests/support/spin.ts:
 *   `spin -a` + gcc -O2 -DSAFETY -DNOREDUCE -DSC + pan, depth unbounded, hash table sized to the
 *   states, 3 GB, 300 s): `_ms` wall time of compile + run, `_cpu_ms` their CPU time, `_complete`
 *   1 only when pan searched every state (0: stopped by memory or time, so its time is no proof
 *   and only a lower bound), `_states`, `_states_per_s`; and `prove_vs_spin.*_cpu`, our CPU time
 *   over SPIN's (goal ≤ 1). SPIN explores the plain §5 environment: no lazy arrival or length.
 */
import os from "node:os";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { kestrelTwoRoutesLayout } from "../fixtures/kestrelTwoRoutes";
import { toPromela } from "@shared/rulebook/promela";
import { prove } from "@shared/rulebook/prove";
import type { Rulebook } from "@shared/rulebook/schema";
import { convergingJunction } from "@shared/rulebook/templates";
import { threeRoutes, wrenfoldFacing } from "../fixtures/junctions";
import { runSpin, spinAvailable, type SpinRun } from "../support/spin";
import type { Report } from "./run";

const now = (): number => performance.now();
/** Past this a proof is reported unfinished: the server's own limit. */
const BENCH_PROOF_MAX_MS = 60_000;
/** pan is interrupted after this and reported incomplete. */
const BENCH_SPIN_MAX_MS = 300_000;
/** pan's memory limit in the bench (the machine has 23 GB, shared). */
const BENCH_SPIN_MEMORY_MB = 3072;

function threeRouteJunction(maxAxles: number, maxTrainsPerRoute: number): Rulebook {
  return convergingJunction({
    routes: threeRoutes(),
    order: "priority",
    priority: "up",
    maxAxles,
    maxTrainsPerRoute,
  });
}

function wrenfold(worked: "power" | "hand"): Rulebook {
  return wrenfoldFacing(worked, { maxAxles: 8, maxTrainsPerRoute: 3 });
}

function withTrains(rulebook: Rulebook, maxAxles: number, maxTrainsPerRoute: number): Rulebook {
  return { ...rulebook, proving: { ...rulebook.proving!, maxAxles, maxTrainsPerRoute } };
}

/** Our CPU time on one proof, and whether it finished (for the comparison with SPIN). */
interface Ours {
  cpuMs: number;
  proved: boolean;
}

/** One proof, with its figures under `name`. */
function measure(report: Report, name: string, rulebook: Rulebook, points?: Record<string, "power" | "hand">): Ours {
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
  report(`${name}_deferred_groups`, result.stats.deferredGroups ?? 0, "groups whose stream axles wait until the group is ready");
  report(`${name}_load_avg`, load, "");
  return { cpuMs, proved: result.verdict === "proved" };
}

/**
 * SPIN on the model of `rulebook`, figures under `spin.<name>`, beside our proof `ours`.
 * `states`: the plain state count where known (sizes pan's hash table).
 */
async function measureSpin(
  report: Report,
  name: string,
  ours: Ours,
  rulebook: Rulebook,
  options: { states?: number; points?: Record<string, "power" | "hand"> } = {},
): Promise<void> {
  const load = os.loadavg()[0];
  const started = now();
  const spin: SpinRun = await runSpin(toPromela(rulebook, { points: options.points }), {
    optimise: true,
    states: options.states,
    memoryMb: BENCH_SPIN_MEMORY_MB,
    timeoutMs: BENCH_SPIN_MAX_MS,
  });
  const verdict = spin.complete
    ? `complete, ${spin.errors} errors`
    : `incomplete: stopped by ${spin.stoppedBy === "memory" ? `memory (${BENCH_SPIN_MEMORY_MB} MB)` : spin.stoppedBy === "time" ? `time (${BENCH_SPIN_MAX_MS / 1000} s)` : (spin.stoppedBy ?? "pan")}; its times are lower bounds`;
  if (spin.complete && spin.errors > 0) throw new Error(`SPIN refutes ${name}: ${spin.violated.join(", ")}`);
  report(`spin.${name}_ms`, now() - started, "ms");
  report(`spin.${name}_compile_ms`, spin.compileMs, "ms");
  report(`spin.${name}_cpu_ms`, spin.cpuMs, "ms");
  report(`spin.${name}_complete`, spin.complete ? 1 : 0, verdict);
  report(`spin.${name}_states`, spin.states, "states");
  report(`spin.${name}_states_per_s`, Math.round(spin.states / (spin.panMs / 1000)), "states/s");
  report(`spin.${name}_load_avg`, load, "");
  const note = !ours.proved
    ? "(goal ≤ 1; not comparable: our proof is unfinished)"
    : spin.complete
      ? "(goal ≤ 1)"
      : "(goal ≤ 1; SPIN unfinished, so the true ratio is smaller)";
  report(`prove_vs_spin.${name}_cpu`, ours.cpuMs / spin.cpuMs, note);
}

export async function run(report: Report): Promise<void> {
  const kestrel = kestrelBankLayout().rulebook as Rulebook;
  const twoRoute = kestrelTwoRoutesLayout().rulebook as Rulebook;
  // Warm up the JIT on a small case: the figures are the prover's, not V8's start-up.
  for (let i = 0; i < 5; i++) prove(withTrains(kestrel, 2, 2));

  const ours = {
    kestrel_bank: measure(report, "prove.kestrel_bank", kestrel),
    kestrel_bank_8x3: measure(report, "prove.kestrel_bank_8x3", withTrains(kestrel, 8, 3)),
    kestrel_two_route_8x2: measure(report, "prove.kestrel_two_route_8x2", withTrains(twoRoute, 8, 2)),
    kestrel_two_route_8x3: measure(report, "prove.kestrel_two_route_8x3", withTrains(twoRoute, 8, 3)),
    three_route_3x2: measure(report, "prove.three_route_3x2", threeRouteJunction(3, 2)),
    three_route_8x3: measure(report, "prove.three_route_8x3", threeRouteJunction(8, 3)),
    wrenfold_power: measure(report, "prove.wrenfold_power", wrenfold("power"), { P2: "power" }),
    wrenfold_hand: measure(report, "prove.wrenfold_hand", wrenfold("hand"), { P2: "hand" }),
  };

  if (await spinAvailable()) {
    // Plain state counts as SPIN measured them (they size the hash table); unknown for 8 × 3 and
    // for the three-route demo (a guess),
    // where the hash table gets the largest size the memory limit allows.
    await measureSpin(report, "kestrel_bank", ours.kestrel_bank, kestrel, { states: 10_000_000 });
    await measureSpin(report, "kestrel_two_route_8x2", ours.kestrel_two_route_8x2, withTrains(twoRoute, 8, 2), { states: 9_795_350 });
    await measureSpin(report, "three_route_3x2", ours.three_route_3x2, threeRouteJunction(3, 2), { states: 1_327_148 });
    await measureSpin(report, "wrenfold_power", ours.wrenfold_power, wrenfold("power"), { states: 459_812, points: { P2: "power" } });
    await measureSpin(report, "wrenfold_hand", ours.wrenfold_hand, wrenfold("hand"), { states: 535_880, points: { P2: "hand" } });
    await measureSpin(report, "kestrel_bank_8x3", ours.kestrel_bank_8x3, withTrains(kestrel, 8, 3), { states: 1e9 });
    await measureSpin(report, "three_route_8x3", ours.three_route_8x3, threeRouteJunction(8, 3), { states: 1e9 });
  }
}
