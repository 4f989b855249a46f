/**
 * The simulation worker: one long-lived thread that runs POST /api/simulate requests one at a
 * time (server/features/simulate/simulation.ts). The runner terminates it when a request
 * takes too long and starts a fresh one for the next.
 *
 * In: {@link SimulationRequest}. Out: {@link SimulationResponse}.
 */
import os from "node:os";
import { parentPort } from "node:worker_threads";
import { runSimulation, type SimulationReply } from "./simulation";

/**
 * Niceness of this thread (Linux sets it per thread): when the cores are busy, the live
 * pipeline on the main thread goes first and a simulation takes a little longer.
 */
const SIMULATION_WORKER_NICE = 10;
try {
  os.setPriority(SIMULATION_WORKER_NICE);
} catch {
  // Not allowed here (or not supported): the simulation runs at normal priority.
}

export interface SimulationRequest {
  id: number;
  body: Uint8Array;
}

/** The reply's JSON as UTF-8 bytes, whose buffer is transferred rather than copied. */
export type SimulationResponse = { type: "ready" } | { type: "reply"; id: number; status: number; body: Uint8Array };

parentPort!.on("message", (request: SimulationRequest) => {
  let reply: SimulationReply;
  try {
    reply = runSimulation(request.body);
  } catch (err) {
    reply = { status: 500, json: JSON.stringify({ error: { code: "internal", message: `the simulation failed: ${(err as Error).message}` } }) };
  }
  const body = new TextEncoder().encode(reply.json);
  parentPort!.postMessage({ type: "reply", id: request.id, status: reply.status, body } satisfies SimulationResponse, [body.buffer]);
});
// Loaded: the runner starts a request's clock only from here, so start-up is not counted.
parentPort!.postMessage({ type: "ready" } satisfies SimulationResponse);
