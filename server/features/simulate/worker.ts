/**
 * The simulation worker: one long-lived thread that runs POST /api/simulate requests one at a
 * time (server/features/simulate/simulation.ts). The runner terminates it when a request
 * takes too long and starts a fresh one for the next.
 *
 * In: {@link SimulationRequest}. Out: {@link SimulationResponse}.
 */
import { parentPort } from "node:worker_threads";
import { runSimulation, type SimulationReply } from "./simulation";

export interface SimulationRequest {
  id: number;
  body: Uint8Array;
}

export type SimulationResponse = { id: number } & SimulationReply;

parentPort!.on("message", (request: SimulationRequest) => {
  let reply: SimulationReply;
  try {
    reply = runSimulation(request.body);
  } catch (err) {
    reply = { status: 500, json: JSON.stringify({ error: { code: "internal", message: `the simulation failed: ${(err as Error).message}` } }) };
  }
  parentPort!.postMessage({ id: request.id, ...reply } satisfies SimulationResponse);
});
