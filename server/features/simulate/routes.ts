/**
 * POST /api/simulate (CONTRACT.md §6): runs a list of inputs through a layout's rulebook
 * with the same pure step function the live pipeline uses, and returns every step.
 *
 * The body is taken raw and handed to the simulation worker (./runner.ts) unparsed: parsing,
 * validating and running a large simulation all happen off the main thread.
 */
import express, { Router } from "express";
import type { AppDeps } from "../../deps";
import { requireSignedIn } from "../auth/middleware";
import { SimulationRunner } from "./runner";

export const SIMULATE_PATH = "/api/simulate";
/** 100,000 inputs of the contract's form fit; past this body-parser answers 413. */
export const SIMULATE_BODY_LIMIT = "12mb";

export function simulateRoutes(_deps: AppDeps): Router {
  const router = Router();
  const runner = new SimulationRunner();
  router.post(
    "/simulate",
    requireSignedIn,
    express.raw({ type: () => true, limit: SIMULATE_BODY_LIMIT }),
    async (req, res) => {
      const body = Buffer.isBuffer(req.body) ? req.body : Buffer.alloc(0);
      const reply = await runner.run(body);
      // Written as bytes: res.send would hash megabytes for an ETag on the main thread.
      res.status(reply.status).type("application/json").setHeader("Content-Length", reply.body.byteLength);
      res.end(reply.body);
    },
  );
  return router;
}
