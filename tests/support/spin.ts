/**
 * Runs SPIN 6.5.2 (Debian package `spin`) on a Promela model from `shared/rulebook/promela.ts`:
 * `spin -a`, compile pan with gcc (-DSAFETY: assertions only; exhaustive, no bit-state hashing),
 * run `pan -c0 -E` (list every violated assertion; a train-free dead end is not an error) with a
 * search depth and hash table sized to the model, and parse its report. Used by tests/unit/prove-spin.test.ts and tests/bench/prove.bench.ts.
 */
import { execFile } from "node:child_process";
import { mkdtemp, rm, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { promisify } from "node:util";
import { parsePanOutput, type PanReport } from "../../shared/rulebook/promela";

const run = promisify(execFile);

/** Memory pan may use, in MB: a model that needs more is "incomplete". */
export const PAN_MEMORY_LIMIT_MB = 1024;
/**
 * pan's depth-first search needs a stack as deep as its longest path, which grows with the model
 * (trains × axles × detectors, and the cycles through them). pan is first run with
 * {@link PAN_FIRST_DEPTH} (or the caller's estimate) and, while it reports "max search depth too
 * small", run again with four times the depth, up to {@link PAN_MAX_DEPTH}.
 */
export const PAN_FIRST_DEPTH = 100_000;
export const PAN_MAX_DEPTH = 200_000_000;
const PAN_DEPTH_GROWTH = 4;
/** Hash table of 2^w slots: sized to the expected states, between these bounds. */
const PAN_HASH_BITS_MIN = 20;
const PAN_HASH_BITS_MAX = 27;

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
}

export interface SpinOptions {
  /** gcc -O2 instead of -O0 (the bench; tests compile many small models, where -O0 is faster overall). */
  optimise?: boolean;
  /** Expected number of states (e.g. from the plain search), to size pan's hash table and first depth. */
  states?: number;
  /** Stop pan after this long (all its runs together); the report is then incomplete. */
  timeoutMs?: number;
}

/**
 * Checks a Promela model with SPIN; the work happens in a fresh temporary directory. The search
 * depth is sized to the model (see {@link PAN_FIRST_DEPTH}); `depth` in the result is the bound
 * of the last run.
 */
export async function runSpin(model: string, options: SpinOptions = {}): Promise<SpinRun & { depth: number }> {
  const dir = await mkdtemp(join(tmpdir(), "blocklight-spin-"));
  try {
    await writeFile(join(dir, "model.pml"), model);
    await run("spin", ["-a", "model.pml"], { cwd: dir });
    await run(
      "gcc",
      [options.optimise ? "-O2" : "-O0", "-w", "-DSAFETY", `-DMEMLIM=${PAN_MEMORY_LIMIT_MB}`, "-o", "pan", "pan.c"],
      { cwd: dir },
    );
    const expected = options.states ?? 0;
    const hashBits = Math.min(PAN_HASH_BITS_MAX, Math.max(PAN_HASH_BITS_MIN, Math.ceil(Math.log2(Math.max(1, expected) * 2))));
    let depth = Math.min(PAN_MAX_DEPTH, Math.max(PAN_FIRST_DEPTH, expected + 1));
    const deadline = options.timeoutMs === undefined ? Infinity : Date.now() + options.timeoutMs;
    for (;;) {
      const timeout = deadline === Infinity ? 0 : Math.max(1, deadline - Date.now());
      // pan exits non-zero when it finds errors (or is stopped); its report is on stdout either way.
      const result = await run("./pan", ["-c0", "-E", `-m${depth}`, `-w${hashBits}`], { cwd: dir, maxBuffer: 64 << 20, timeout }).catch(
        (err: { stdout?: string; stderr?: string }) => ({ stdout: err.stdout ?? "", stderr: err.stderr ?? "" }),
      );
      const output = `${result.stdout}\n${result.stderr}`;
      if (/max search depth too small/i.test(output) && depth < PAN_MAX_DEPTH && Date.now() < deadline) {
        depth = Math.min(PAN_MAX_DEPTH, depth * PAN_DEPTH_GROWTH);
        continue;
      }
      return { ...parsePanOutput(output), output, depth };
    }
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}
