/**
 * Runs simulations off the main thread, one at a time, in one long-lived worker
 * (server/features/simulate/worker.ts): the engine is the same pure step the live pipeline
 * uses, and a simulation of many thousand inputs must not keep a single aspect command waiting.
 * A request that runs longer than SIMULATE_MAX_MS has its worker terminated (the next request
 * gets a fresh one); requests beyond SIMULATE_MAX_WAITING are refused rather than queued.
 */
import type { Worker } from "node:worker_threads";
import { HttpError } from "../../http/errors";
import { startTsWorker } from "../../workers/tsWorker";
import type { SimulationRequest, SimulationResponse } from "./worker";

export const SIMULATE_MAX_MS = 10_000;
export const SIMULATE_MAX_WAITING = 8;
/** Heap of the worker: the output limit keeps a reply near 15 MB; this stops anything odd. */
export const SIMULATE_WORKER_HEAP_MB = 512;

const WORKER_URL = new URL("./worker.ts", import.meta.url).href;

/** The status and the UTF-8 JSON body of a reply, ready to write out. */
export interface SimulationResult {
  status: number;
  body: Uint8Array;
}

interface Job {
  id: number;
  body: Uint8Array;
  maxMs: number;
  resolve(reply: SimulationResult): void;
  reject(err: Error): void;
}

export class SimulationRunner {
  private worker: Worker | null = null;
  private workerReady = false;
  private current: (Job & { timer: NodeJS.Timeout | null }) | null = null;
  private readonly waiting: Job[] = [];
  private nextId = 1;
  private closed = false;

  constructor(private readonly options: { maxMs?: number } = {}) {}

  run(body: Uint8Array, options: { maxMs?: number } = {}): Promise<SimulationResult> {
    if (this.closed) return Promise.reject(new HttpError(503, "unavailable", "the server is stopping"));
    if (this.waiting.length >= SIMULATE_MAX_WAITING) {
      return Promise.reject(new HttpError(503, "simulations_busy", "too many simulations are waiting; try again shortly"));
    }
    return new Promise<SimulationResult>((resolve, reject) => {
      const maxMs = options.maxMs ?? this.options.maxMs ?? SIMULATE_MAX_MS;
      this.waiting.push({ id: this.nextId++, body, maxMs, resolve, reject });
      this.next();
    });
  }

  private next(): void {
    if (this.current || this.closed) return;
    const job = this.waiting.shift();
    if (!job) return;
    this.current = { ...job, timer: null };
    const { worker, ready } = this.ensureWorker();
    if (ready) this.send(worker, this.current);
  }

  /** Posts the current job and starts its clock (once the worker has loaded). */
  private send(worker: Worker, job: Job & { timer: NodeJS.Timeout | null }): void {
    const { maxMs } = job;
    job.timer = setTimeout(() => {
      this.discardWorker();
      this.finish(job.id, null, new HttpError(503, "simulation_timeout", `the simulation took longer than ${maxMs / 1000} s; simulate fewer inputs`));
    }, maxMs);
    // The body's bytes move to the worker rather than being copied.
    const copy = new Uint8Array(job.body);
    worker.postMessage({ id: job.id, body: copy } satisfies SimulationRequest, [copy.buffer]);
  }

  private ensureWorker(): { worker: Worker; ready: boolean } {
    if (this.worker) return { worker: this.worker, ready: this.workerReady };
    const worker = startTsWorker(WORKER_URL, { resourceLimits: { maxOldGenerationSizeMb: SIMULATE_WORKER_HEAP_MB } });
    this.workerReady = false;
    worker.unref(); // an idle simulation worker must not keep the process alive
    worker.on("message", (response: SimulationResponse) => {
      if (response.type === "ready") {
        this.workerReady = true;
        if (this.current && this.current.timer === null && this.worker === worker) this.send(worker, this.current);
        return;
      }
      this.finish(response.id, { status: response.status, body: response.body });
    });
    worker.on("error", (err) => {
      if (this.worker !== worker) return; // a worker already discarded after a timeout
      const outOfMemory = (err as NodeJS.ErrnoException).code === "ERR_WORKER_OUT_OF_MEMORY";
      const failure = outOfMemory
        ? new HttpError(413, "simulation_too_large", `the simulation needed more than ${SIMULATE_WORKER_HEAP_MB} MB of memory`)
        : new HttpError(500, "internal", "the simulation worker failed");
      if (this.current) this.finish(this.current.id, null, failure);
    });
    worker.on("exit", () => {
      if (this.worker !== worker) return;
      this.worker = null;
      if (this.current) this.finish(this.current.id, null, new HttpError(500, "internal", "the simulation worker stopped"));
    });
    this.worker = worker;
    return { worker, ready: false };
  }

  private finish(id: number, reply: SimulationResult | null, err?: Error): void {
    const job = this.current;
    if (!job || job.id !== id) return;
    if (job.timer) clearTimeout(job.timer);
    this.current = null;
    if (reply) job.resolve(reply);
    else job.reject(err ?? new Error("the simulation failed"));
    this.next();
  }

  private discardWorker(): void {
    const worker = this.worker;
    this.worker = null;
    void worker?.terminate();
  }

  async close(): Promise<void> {
    this.closed = true;
    for (const job of this.waiting.splice(0)) job.reject(new HttpError(503, "unavailable", "the server is stopping"));
    if (this.current) this.finish(this.current.id, null, new HttpError(503, "unavailable", "the server is stopping"));
    const worker = this.worker;
    this.worker = null;
    await worker?.terminate();
  }
}
