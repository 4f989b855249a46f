/**
 * Runs SPIN 6.5.2 (Debian package `spin`) on a Promela model from `shared/rulebook/promela.ts`:
 * `spin -a`, compile pan with gcc (-DSAFETY: assertions only; exhaustive, no bit-state hashing),
 * run `pan -c0 -E` (list every violated assertion; a train-free dead end is not an error),
 * and parse its report. Used by tests/unit/prove-spin.test.ts and tests/bench/prove.bench.ts.
 */
import { execFile } from "node:child_process";
import { mkdtemp, rm, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { promisify } from "node:util";
import { parsePanOutput, type PanReport } from "../../shared/rulebook/promela";

const run = promisify(execFile);

/** Memory pan may use, in MB, and its search-depth bound: a model that needs more is "incomplete". */
export const PAN_MEMORY_LIMIT_MB = 1024;
export const PAN_MAX_DEPTH = 1_000_000;

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

/** Checks a Promela model with SPIN; the work happens in a fresh temporary directory. */
export async function runSpin(model: string, options: { optimise?: boolean } = {}): Promise<SpinRun> {
  const dir = await mkdtemp(join(tmpdir(), "blocklight-spin-"));
  try {
    await writeFile(join(dir, "model.pml"), model);
    await run("spin", ["-a", "model.pml"], { cwd: dir });
    await run(
      "gcc",
      [options.optimise ? "-O2" : "-O0", "-w", "-DSAFETY", `-DMEMLIM=${PAN_MEMORY_LIMIT_MB}`, "-o", "pan", "pan.c"],
      { cwd: dir },
    );
    // pan exits non-zero when it finds errors; its report is on stdout either way.
    const result = await run("./pan", ["-c0", "-E", `-m${PAN_MAX_DEPTH}`, "-w20"], { cwd: dir, maxBuffer: 64 << 20 }).catch(
      (err: { stdout?: string; stderr?: string }) => ({ stdout: err.stdout ?? "", stderr: err.stderr ?? "" }),
    );
    const output = `${result.stdout}\n${result.stderr}`;
    return { ...parsePanOutput(output), output };
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}
