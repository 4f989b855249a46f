/**
 * The running-day report (`npm run bench -- ui`, next to the live page's figures):
 *
 * - `report.session_10k_events_ms`: `sessionReport` for a stored Kestrel Bank session of
 *   10,000 pulses (trains that obey the signals, from the engine bench's generator), read
 *   from a real PostgreSQL and replayed through the engine; the median of five runs;
 * - `report.page_js_gzip`: the JS the browser loads for the report page (entry, its
 *   preloads, the page chunk and what it imports, the charting library among them), gzipped.
 *
 * Needs `npx vite build` first for the second figure.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import zlib from "node:zlib";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { Bus } from "../../server/bus";
import { configFromEnv } from "../../server/config";
import { openDatabase } from "../../server/db/database";
import { freePort, startEmbeddedPostgres } from "../../server/db/embeddedPostgres";
import type { AppDeps } from "../../server/deps";
import { importLayout } from "../../server/features/layouts/service";
import { importSession, type ImportedEvent } from "../../server/features/sessions/import";
import { sessionReport } from "../../server/features/sessions/reportService";
import { createLogger } from "../../server/logger";
import { generateKestrelSession } from "./engine.bench";

type Report = (name: string, value: number, unit: string) => void;

const EVENTS = 10_000;
const RUNS = 5;
const DAY_START_MS = Date.parse("2026-05-02T09:00:00.000Z");

/** The chunk and every chunk it imports statically. */
function closure(dist: string, start: string[]): Set<string> {
  const seen = new Set<string>();
  const queue = [...start];
  while (queue.length > 0) {
    const file = queue.pop()!;
    if (seen.has(file)) continue;
    seen.add(file);
    const code = fs.readFileSync(path.join(dist, file), "utf8");
    for (const m of code.matchAll(/(?:from|import)\s*"\.\/([^"]+\.js)"/g)) queue.push(path.join(path.dirname(file), m[1]));
  }
  return seen;
}

function reportPageJs(dist: string): number {
  const html = fs.readFileSync(path.join(dist, "index.html"), "utf8");
  const refs = [...html.matchAll(/(?:src|href)="\/?(assets\/[^"]+\.js)"/g)].map((m) => m[1]);
  const chunk = fs.readdirSync(path.join(dist, "assets")).find((f) => f.startsWith("ReportPage-") && f.endsWith(".js"));
  if (!chunk) return Number.NaN;
  const gz = (file: string) => zlib.gzipSync(fs.readFileSync(path.join(dist, file)), { level: 9 }).length;
  return [...closure(dist, [...refs, path.join("assets", chunk)])].reduce((sum, f) => sum + gz(f), 0);
}

export async function run(report: Report): Promise<void> {
  const dist = path.resolve("dist");
  if (fs.existsSync(path.join(dist, "index.html"))) report("report.page_js_gzip", Math.round(reportPageJs(dist) / 102.4) / 10, "KB");
  else report("report.page_js_gzip", Number.NaN, "KB (dist/ not built: run `npx vite build`)");

  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-bench-report-"));
  const pg = await startEmbeddedPostgres({ dataDir, port: await freePort() });
  const cleanups: (() => Promise<unknown> | unknown)[] = [() => pg.stop(), () => fs.rmSync(dataDir, { recursive: true, force: true })];
  try {
    const db = await openDatabase(pg.url);
    cleanups.unshift(() => db.close());
    const deps: AppDeps = { config: { ...configFromEnv({}), serveClient: false }, db, logger: createLogger("silent"), bus: new Bus() };
    const layout = kestrelBankLayout();
    await importLayout(deps, layout, null);
    const nodeOf = new Map(layout.nodes.flatMap((n) => n.detectors.map((d) => [d, n.id] as const)));
    const seqs = new Map<string, number>();
    const events: ImportedEvent[] = generateKestrelSession(layout.rulebook, EVENTS).map((input) => {
      const detector = (input as { detector: string }).detector;
      const node = nodeOf.get(detector)!;
      seqs.set(node, (seqs.get(node) ?? 0) + 1);
      return { kind: "pulse", status: "accepted", node, boot: "bench", seq: seqs.get(node)!, detector, receivedAt: new Date(DAY_START_MS + input.at).toISOString() };
    });
    const [{ id: layoutId }] = await db.sequelize.query<{ id: number }>(`SELECT id FROM layouts WHERE slug = :slug`, { replacements: { slug: layout.slug }, type: "SELECT" as never });
    const { sessionId } = await importSession(deps, events, { layoutId, liveVersion: 1, fileName: "bench.jsonl", userId: null });
    await sessionReport(deps, sessionId); // warm up the JIT and the connection pool
    const times: number[] = [];
    let trains = 0;
    for (let i = 0; i < RUNS; i++) {
      const started = performance.now();
      trains = (await sessionReport(deps, sessionId)).trains.length;
      times.push(performance.now() - started);
    }
    times.sort((a, b) => a - b);
    report("report.session_10k_events_ms", Math.round(times[RUNS >> 1]), "ms");
    report("report.session_10k_trains", trains, "trains");
  } finally {
    for (const cleanup of cleanups) await cleanup();
  }
}
