/**
 * Starts a worker thread on a TypeScript module, as the proof pool does
 * (server/features/prove/pool.ts): the worker loads the module through tsx's API rather than
 * `execArgv: ["--import", "tsx"]`, because on Node 20 hooks registered that way do not apply to
 * a worker's entry module. tsx and the tsconfig.json whose `paths` give `@shared/…` are found
 * from this file, so neither the working directory nor the parent's loader (node --import tsx,
 * or vitest's own) matters.
 */
import { createRequire } from "node:module";
import path from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { Worker, type ResourceLimits } from "node:worker_threads";

const TSX_API_URL = pathToFileURL(path.join(path.dirname(createRequire(import.meta.url).resolve("tsx/package.json")), "dist/esm/api/index.mjs")).href;
const TSCONFIG = fileURLToPath(new URL("../../tsconfig.json", import.meta.url));

export function startTsWorker(moduleUrl: string, options: { workerData?: unknown; resourceLimits?: ResourceLimits } = {}): Worker {
  const bootstrap = `import(${JSON.stringify(TSX_API_URL)})
  .then((tsx) => tsx.tsImport(${JSON.stringify(moduleUrl)}, { parentURL: ${JSON.stringify(moduleUrl)}, tsconfig: ${JSON.stringify(TSCONFIG)} }))
  .catch((err) => { setImmediate(() => { throw err; }); });`;
  return new Worker(bootstrap, { eval: true, workerData: options.workerData, resourceLimits: options.resourceLimits });
}
