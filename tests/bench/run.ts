/**
 * `npm run bench [-- NAME…]`: runs every `tests/bench/*.bench.ts` module in turn (only those
 * whose file name contains one of the NAMEs, when given) and prints one `name: value unit`
 * line per figure. A module that throws is reported and the rest still run; the exit code is
 * 1 if any failed.
 *
 * A bench module exports `run(report)` and calls `report(name, value, unit)` per figure.
 */
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";

export type Report = (name: string, value: number, unit: string) => void;
export interface BenchModule {
  run(report: Report): Promise<void> | void;
}

const BENCH_DIR = path.dirname(fileURLToPath(import.meta.url));
const SUFFIX = ".bench.ts";

function formatValue(value: number): string {
  if (!Number.isFinite(value)) return String(value);
  if (Number.isInteger(value)) return String(value);
  return Math.abs(value) >= 100 ? value.toFixed(1) : Number(value.toPrecision(3)).toString();
}

export async function runBenches(filters: string[], out: (line: string) => void = (l) => process.stdout.write(l + "\n")): Promise<{ failed: string[]; ran: string[] }> {
  const files = fs
    .readdirSync(BENCH_DIR)
    .filter((f) => f.endsWith(SUFFIX))
    .sort();
  const selected = files.filter((f) => filters.length === 0 || filters.some((word) => f.slice(0, -SUFFIX.length).includes(word)));
  const failed: string[] = [];
  const ran: string[] = [];
  if (selected.length === 0) out(`no bench modules match ${filters.join(", ") || "(any)"} in ${BENCH_DIR}`);
  for (const file of selected) {
    const name = file.slice(0, -SUFFIX.length);
    const started = performance.now();
    out(`# ${name}`);
    try {
      const mod = (await import(pathToFileURL(path.join(BENCH_DIR, file)).href)) as Partial<BenchModule>;
      if (typeof mod.run !== "function") throw new Error(`${file} does not export run(report)`);
      await mod.run((figure, value, unit) => out(`${figure}: ${formatValue(value)} ${unit}`.trimEnd()));
      ran.push(name);
      out(`# ${name} done in ${((performance.now() - started) / 1000).toFixed(1)} s`);
    } catch (err) {
      failed.push(name);
      out(`# ${name} FAILED: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}`);
    }
  }
  if (failed.length) out(`# ${failed.length} bench module(s) failed: ${failed.join(", ")}`);
  return { failed, ran };
}

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const filters = process.argv.slice(2).filter((arg) => !arg.startsWith("-"));
  // Ctrl-C goes through process.exit so the exit hooks stop the benches' own PostgreSQL.
  for (const signal of ["SIGINT", "SIGTERM"] as const) process.once(signal, () => process.exit(130));
  const { failed } = await runBenches(filters);
  // Bench modules may leave pools or sockets open; the figures are printed, so leave now.
  process.exit(failed.length ? 1 : 0);
}
