/**
 * Runs SPIN 6.5.2 (Debian package `spin`) on a Promela model from `shared/rulebook/promela.ts`:
 * `spin -a`, compile pan with gcc, run `pan -c0 -E` (list every violated assertion; a train-free
 * dead end is not an error) and parse its report. Used by tests/unit/prove-spin.test.ts and
 * tests/bench/prove.bench.ts.
 *
 * pan is built for an exhaustive safety search sized to the model:
 * - `-DSAFETY`: assertions only; no bit-state hashing, no hash compaction (every state is stored
 *   whole, so "no errors" on a complete run is a proof).
 * - `-DNOREDUCE`: the model is one process, so partial-order reduction has nothing to reduce.
 * - `-DSC` (stack cycling): only {@link PAN_STACK_IN_MEMORY} levels of the depth-first stack stay
 *   in memory, the rest is swapped to a file, so the search depth is not bounded by `-m` — a
 *   depth-first path can be as long as the model has states, which no estimate made beforehand
 *   bounds usefully. Should pan still say "max search depth too small", it is run again with
 *   four times the depth, up to {@link PAN_MAX_DEPTH}.
 * - `-w`: a hash table of about one slot per expected state (the caller's estimate), within
 *   bounds and at most a quarter of the memory limit.
 * - `-DMEMLIM`: the memory limit; a run that reaches it is incomplete, `stoppedBy: "memory"`.
 */
import { execFile, spawn } from "node:child_process";
import { mkdtemp, rm, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { promisify } from "node:util";
import { parsePanOutput, type PanReport } from "@shared/rulebook/promela";

const run = promisify(execFile);

/** Default memory pan may use, in MB: a model that needs more is "incomplete". */
export const PAN_MEMORY_LIMIT_MB = 1024;
/** Levels of the depth-first stack kept in memory under stack cycling (`-DSC`). */
export const PAN_STACK_IN_MEMORY = 100_000;
export const PAN_MAX_DEPTH = 200_000_000;
const PAN_DEPTH_GROWTH = 4;
/** Hash table of 2^w slots (8 bytes each): sized to the expected states, between these bounds. */
const PAN_HASH_BITS_MIN = 18;
const PAN_HASH_BITS_MAX = 28;
const PAN_SLOT_BYTES = 8;

/** Is the `spin` command available? */
export async function spinAvailable(): Promise<boolean> {
  try {
    await run("spin", ["-V"]);
    return true;
  } catch {
    return false;
  }
}

export interface SpinRun extends PanReport {
  output: string;
  /** Why an incomplete run stopped: the caller's time limit, the memory limit, or the depth bound. */
  stoppedBy: "time" | "memory" | "depth" | null;
  /** `-m` of the last pan run. */
  depth: number;
  /** `-w` of the pan runs. */
  hashBits: number;
  /** Wall time of `spin -a` + gcc, and of pan (all its runs). */
  compileMs: number;
  panMs: number;
  /** CPU time (user + system) of spin, gcc and pan together. */
  cpuMs: number;
}

export interface SpinOptions {
  /** gcc -O2 instead of -O0 (the bench; tests compile many small models, where -O0 is faster overall). */
  optimise?: boolean;
  /** Expected number of states (e.g. from the plain search), to size pan's hash table. */
  states?: number;
  /** Memory pan may use, in MB (default {@link PAN_MEMORY_LIMIT_MB}). */
  memoryMb?: number;
  /** Interrupt pan after this long (all its runs together); the report is then incomplete. */
  timeoutMs?: number;
}

interface Timed {
  output: string;
  cpuMs: number;
  interrupted: boolean;
  exitCode: number | null;
}

const CPU_LINE = /^spin-cpu (\d+(?:\.\d+)?) (\d+(?:\.\d+)?)$/m;

/**
 * Runs one command under bash's `time` (user + system CPU on the last stderr line) in its own
 * process group; past `timeoutMs` the group gets SIGINT, on which pan stops and prints its
 * statistics. Never rejects on a non-zero exit: pan exits non-zero when it finds errors.
 */
function timed(cwd: string, command: string[], timeoutMs = Infinity): Promise<Timed> {
  return new Promise((resolve, reject) => {
    const child = spawn("bash", ["-c", 'TIMEFORMAT="spin-cpu %3U %3S"; time "$@"', "bash", ...command], { cwd, detached: true });
    const chunks: Buffer[] = [];
    child.stdout.on("data", (d: Buffer) => chunks.push(d));
    child.stderr.on("data", (d: Buffer) => chunks.push(d));
    let interrupted = false;
    const timer =
      timeoutMs === Infinity
        ? undefined
        : setTimeout(() => {
            interrupted = true;
            process.kill(-child.pid!, "SIGINT");
          }, Math.max(1, timeoutMs));
    child.on("error", reject);
    child.on("close", (exitCode) => {
      clearTimeout(timer);
      const output = Buffer.concat(chunks).toString();
      const cpu = CPU_LINE.exec(output);
      resolve({ output, cpuMs: cpu ? (Number(cpu[1]) + Number(cpu[2])) * 1000 : NaN, interrupted, exitCode });
    });
  });
}

async function mustSucceed(cwd: string, command: string[]): Promise<number> {
  const result = await timed(cwd, command);
  if (result.exitCode !== 0) {
    throw new Error(`${command.join(" ")} failed:\n${result.output.slice(0, 4000)}`);
  }
  return result.cpuMs;
}

/** `-w` for about one slot per expected state, within bounds and a quarter of the memory limit. */
export function hashBitsFor(states: number | undefined, memoryMb: number): number {
  const wanted = Math.ceil(Math.log2(Math.max(1, states ?? 0)));
  const affordable = Math.floor(Math.log2((memoryMb * 1048576) / 4 / PAN_SLOT_BYTES));
  return Math.max(PAN_HASH_BITS_MIN, Math.min(PAN_HASH_BITS_MAX, wanted, affordable));
}

/** Checks a Promela model with SPIN; the work happens in a fresh temporary directory. */
export async function runSpin(model: string, options: SpinOptions = {}): Promise<SpinRun> {
  const dir = await mkdtemp(join(tmpdir(), "blocklight-spin-"));
  const memoryMb = options.memoryMb ?? PAN_MEMORY_LIMIT_MB;
  try {
    await writeFile(join(dir, "model.pml"), model);
    const compileStarted = performance.now();
    let cpuMs = await mustSucceed(dir, ["spin", "-a", "model.pml"]);
    const flags = ["-w", "-DSAFETY", "-DNOREDUCE", "-DSC", `-DMEMLIM=${memoryMb}`];
    cpuMs += await mustSucceed(dir, ["gcc", options.optimise ? "-O2" : "-O0", ...flags, "-o", "pan", "pan.c"]);
    const compileMs = performance.now() - compileStarted;

    const hashBits = hashBitsFor(options.states, memoryMb);
    const panStarted = performance.now();
    const deadline = options.timeoutMs === undefined ? Infinity : panStarted + options.timeoutMs;
    let depth = PAN_STACK_IN_MEMORY;
    for (;;) {
      const result = await timed(dir, ["./pan", "-c0", "-E", `-m${depth}`, `-w${hashBits}`], deadline - performance.now());
      cpuMs += result.cpuMs;
      const { output } = result;
      const depthTooSmall = /max search depth too small/i.test(output);
      if (depthTooSmall && !result.interrupted && depth < PAN_MAX_DEPTH && performance.now() < deadline) {
        depth = Math.min(PAN_MAX_DEPTH, depth * PAN_DEPTH_GROWTH);
        continue;
      }
      const report = parsePanOutput(output);
      const memory = /out of memory|reached -DMEMLIM bound/i.test(output);
      const stoppedBy = result.interrupted ? "time" : memory ? "memory" : depthTooSmall ? "depth" : null;
      return {
        ...report,
        complete: report.complete && stoppedBy === null,
        output,
        stoppedBy,
        depth,
        hashBits,
        compileMs,
        panMs: performance.now() - panStarted,
        cpuMs,
      };
    }
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}
