/**
 * A small pool that runs proofs in worker threads, at most one per core at once; the rest
 * wait in order. Each proof gets its own worker (started with tsx, so the TypeScript prover
 * loads the same way under `node --import tsx` and under vitest) and cancelling a proof
 * terminates its worker.
 */
import { createRequire } from "node:module";
import os from "node:os";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { Worker } from "node:worker_threads";
import { DEFAULT_MAX_STATES, type ProofResult } from "@shared/rulebook/prove";
import type { Rulebook } from "@shared/rulebook/schema";
import type { ProofProgress, ProofWorkerInput, ProofWorkerMessage } from "./worker";

/** Bounds of one proof: past either, the verdict is "unfinished". */
export const PROOF_MAX_STATES = DEFAULT_MAX_STATES;
export const PROOF_MAX_MS = 60_000;
/**
 * Heap of one proof worker. A 5,000,000-state proof of the demo junction needs about 0.7 GB,
 * mostly outside the heap; the cap only stops an odd rulebook from taking the server down.
 */
export const PROOF_WORKER_HEAP_MB = 1536;
/** Proofs waiting for a free core beyond this many are refused (503) rather than queued. */
export const PROOF_MAX_WAITING = 32;

const WORKER_URL = new URL("./worker.ts", import.meta.url).href;
/**
 * The worker loads the TypeScript prover through tsx's API rather than `execArgv: ["--import",
 * "tsx"]`: on Node 20 hooks registered that way do not apply to a worker's entry module.
 * tsx is found from this file, so neither the working directory nor the parent's loader
 * (node --import tsx, or vitest's own) matters.
 */
const TSX_API_URL = pathToFileURL(path.join(path.dirname(createRequire(import.meta.url).resolve("tsx/package.json")), "dist/esm/api/index.mjs")).href;
const WORKER_BOOTSTRAP = `import(${JSON.stringify(TSX_API_URL)})
  .then((tsx) => tsx.tsImport(${JSON.stringify(WORKER_URL)}, ${JSON.stringify(WORKER_URL)}))
  .catch((err) => { setImmediate(() => { throw err; }); });`;

export class ProofCancelled extends Error {
  constructor() {
    super("the proof was cancelled");
    this.name = "ProofCancelled";
  }
}

export class PoolFull extends Error {
  constructor() {
    super("too many proofs are waiting; try again shortly");
    this.name = "PoolFull";
  }
}

export interface ProofRun {
  /** Resolves with the prover's result; rejects with ProofCancelled after `cancel()`. */
  result: Promise<ProofResult>;
  /** Stops the proof: terminates its worker if it runs, or drops it from the queue. */
  cancel(): void;
}

export interface ProofRunOptions {
  maxStates?: number;
  maxMs?: number;
  points?: Record<string, "power" | "hand">;
  onStart?: () => void;
  onProgress?: (progress: ProofProgress) => void;
}

interface Waiting {
  start(): void;
  cancelled: boolean;
}

export class ProofPool {
  private running = 0;
  private readonly waiting: Waiting[] = [];
  private readonly workers = new Set<Worker>();

  constructor(readonly size: number = Math.max(1, os.availableParallelism())) {}

  run(rulebook: Rulebook, options: ProofRunOptions = {}): ProofRun {
    if (this.waiting.length >= PROOF_MAX_WAITING && this.running >= this.size) throw new PoolFull();
    let worker: Worker | null = null;
    let settled = false;
    let cancel!: () => void;
    const result = new Promise<ProofResult>((resolve, reject) => {
      const finish = (outcome: { ok: true; result: ProofResult } | { ok: false; error: Error }) => {
        if (settled) return;
        settled = true;
        if (worker) {
          this.workers.delete(worker);
          this.running--;
          void worker.terminate();
          this.next();
        }
        if (outcome.ok) resolve(outcome.result);
        else reject(outcome.error);
      };
      const entry: Waiting = {
        cancelled: false,
        start: () => {
          this.running++;
          options.onStart?.();
          const input: ProofWorkerInput = {
            rulebook,
            maxStates: options.maxStates ?? PROOF_MAX_STATES,
            maxMs: options.maxMs ?? PROOF_MAX_MS,
            ...(options.points ? { points: options.points } : {}),
          };
          worker = new Worker(WORKER_BOOTSTRAP, {
            eval: true,
            workerData: input,
            resourceLimits: { maxOldGenerationSizeMb: PROOF_WORKER_HEAP_MB },
          });
          this.workers.add(worker);
          worker.on("message", (message: ProofWorkerMessage) => {
            if (message.type === "progress") options.onProgress?.({ states: message.states, frontier: message.frontier, depth: message.depth });
            else finish({ ok: true, result: message.result });
          });
          worker.on("error", (error) => {
            const outOfMemory = (error as NodeJS.ErrnoException).code === "ERR_WORKER_OUT_OF_MEMORY";
            finish({ ok: false, error: outOfMemory ? new Error(`the proof needed more than ${PROOF_WORKER_HEAP_MB} MB of memory`) : error });
          });
          worker.on("exit", (code) => finish({ ok: false, error: settled ? new ProofCancelled() : new Error(`the proof worker stopped (exit code ${code})`) }));
        },
      };
      cancel = () => {
        if (settled) return;
        if (!worker) {
          entry.cancelled = true;
          settled = true;
          reject(new ProofCancelled());
          return;
        }
        finish({ ok: false, error: new ProofCancelled() });
      };
      this.waiting.push(entry);
      this.next();
    });
    return { result, cancel: () => cancel() };
  }

  private next(): void {
    while (this.running < this.size && this.waiting.length > 0) {
      const entry = this.waiting.shift()!;
      if (!entry.cancelled) entry.start();
    }
  }

  /** Terminates every running proof (server shutdown, end of a test file). */
  async close(): Promise<void> {
    this.waiting.length = 0;
    await Promise.all([...this.workers].map((w) => w.terminate()));
  }
}
