/**
 * Engine throughput on a generated Kestrel Bank running day: 1,000,000 pulses from trains of
 * 1–2 axles on both routes, up to two trains per route, each train's leading axle passing
 * its signal only when it shows a proceed (as a driver would). Reports pulses per second
 * and the time to replay the whole session through `step`.
 */
import { performance } from "node:perf_hooks";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { compileRulebook, initialState, shownAspects, step, type EngineInput } from "@shared/rulebook/engine";
import type { Rulebook } from "@shared/rulebook/schema";

const SESSION_PULSES = 1_000_000;

/** Small deterministic PRNG (mulberry32) so every run replays the same session. */
function random(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Generates a session of pulses from trains that obey the signals. */
export function generateKestrelSession(rulebook: Rulebook, pulses: number, seed = 22_5): EngineInput[] {
  const rand = random(seed);
  const routes = rulebook.proving!.routes.map((route) => ({ ...route, path: [...route.approach, route.entry, ...route.exit] }));
  const trains: number[][][] = routes.map(() => []); // per route, per train: detectors crossed by each axle
  let state = initialState(rulebook);
  let at = 0;
  const inputs: EngineInput[] = [];
  const moves: [number, number, number][] = [];
  while (inputs.length < pulses) {
    const shown = shownAspects(rulebook, state);
    moves.length = 0;
    routes.forEach((route, r) => {
      const entry = route.approach.length;
      trains[r].forEach((axles, t) => {
        axles.forEach((crossed, a) => {
          if (crossed >= route.path.length) return;
          if (a > 0 && axles[a - 1] <= crossed) return;
          if (a < axles.length - 1 && crossed > 0 && axles[a + 1] < crossed) return;
          if (a === 0 && crossed === entry && shown[route.signal] === "danger") return;
          if (t > 0 && trains[r][t - 1][trains[r][t - 1].length - 1] <= crossed) return;
          moves.push([r, t, a]);
        });
      });
    });
    const arrive = trains.some((ts) => ts.length < 2) && (moves.length === 0 || rand() < 0.08);
    if (arrive) {
      const free = trains.map((ts, r) => (ts.length < 2 ? r : -1)).filter((r) => r >= 0);
      trains[free[Math.floor(rand() * free.length)]].push(new Array(1 + Math.floor(rand() * 2)).fill(0));
      continue;
    }
    const [r, t, a] = moves[Math.floor(rand() * moves.length)];
    const axles = trains[r][t];
    const detector = routes[r].path[axles[a]];
    axles[a] += 1;
    if (axles[axles.length - 1] === routes[r].path.length) trains[r].splice(t, 1);
    at += 200 + Math.floor(rand() * 2_800);
    const input: EngineInput = { type: "pulse", detector, at };
    inputs.push(input);
    state = step(rulebook, state, input).state;
  }
  return inputs;
}

function replayAll(rulebook: Rulebook, inputs: EngineInput[]): number {
  let state = initialState(rulebook);
  let changes = 0;
  for (let i = 0; i < inputs.length; i++) {
    const result = step(rulebook, state, inputs[i]);
    state = result.state;
    changes += result.changes.length;
  }
  return changes;
}

export async function run(report: (name: string, value: number, unit: string) => void): Promise<void> {
  const rulebook = kestrelBankLayout().rulebook;
  compileRulebook(rulebook);
  const inputs = generateKestrelSession(rulebook, SESSION_PULSES);
  replayAll(rulebook, inputs.slice(0, 100_000)); // warm up the JIT
  let best = Number.POSITIVE_INFINITY;
  for (let round = 0; round < 3; round++) {
    const started = performance.now();
    replayAll(rulebook, inputs);
    best = Math.min(best, performance.now() - started);
  }
  report("engine.pulses_per_s", Math.round(inputs.length / (best / 1000)), "pulses/s");
  report("engine.replay_1m_ms", Math.round(best), "ms");
}
