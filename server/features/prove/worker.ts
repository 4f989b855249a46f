/**
 * Runs one proof off the request thread. The pool starts one worker per proof and ends it
 * with `terminate()` to cancel, so the search itself needs no cancellation polling.
 *
 * In: `workerData` = {@link ProofWorkerInput}. Out: {@link ProofWorkerMessage}s.
 */
import { parentPort, workerData } from "node:worker_threads";
import { performance } from "node:perf_hooks";
import { prove, type ProofResult } from "@shared/rulebook/prove";
import type { Rulebook } from "@shared/rulebook/schema";
import type { ProofProgressDto } from "@shared/contract/rest";

export interface ProofWorkerInput {
  rulebook: Rulebook;
  maxStates: number;
  maxMs: number;
  /** How each points is worked, from the layout (absent: inferred, see shared/rulebook/proving/model.ts). */
  points?: Record<string, "power" | "hand">;
}

export type ProofProgress = ProofProgressDto;

export type ProofWorkerMessage = ({ type: "progress" } & ProofProgress) | { type: "done"; result: ProofResult };

const input = workerData as ProofWorkerInput;
const post = (message: ProofWorkerMessage) => parentPort!.postMessage(message);

const result = prove(input.rulebook, {
  maxStates: input.maxStates,
  maxMs: input.maxMs,
  points: input.points,
  now: () => performance.now(),
  onProgress: (p) => post({ type: "progress", ...p }),
});
post({ type: "done", result });
