/**
 * Proving over REST (CONTRACT.md §6): `POST /api/prove` proves a layout file and answers
 * with the result; proof jobs prove stored versions in the background and are followed over
 * socket.io (`proof:watch`) or by polling `GET /api/proofs/:jobId`.
 */
import { Router } from "express";
import { z } from "zod";
import type { ProofJobResponse, ProofJobsResponse, ProofResultDto, StartProofResponse } from "@shared/contract/rest";
import { pointsWorking } from "@shared/layout/schema";
import { validateLayoutFile } from "@shared/rulebook/validate";
import type { AppDeps } from "../../deps";
import { HttpError, parseWith } from "../../http/errors";
import { requirePermission, requireSignedIn } from "../auth/middleware";
import { PoolFull, ProofCancelled } from "./pool";
import { proofJobs, toResultDto } from "./service";

const versionParam = z.coerce.number().int().positive();
const jobIdParam = z.uuid();

export function proveRoutes(deps: AppDeps): Router {
  const router = Router();

  router.post("/prove", requireSignedIn, async (req, res) => {
    const checked = validateLayoutFile(req.body);
    if (!checked.ok) throw new HttpError(400, "invalid_layout", `the layout file has ${checked.errors.length} error(s)`, checked.errors);
    let run;
    try {
      // The file says how its points are worked (`hand` when a /1 file does not say).
      const points = Object.fromEntries(checked.layout.points.map((p) => [p.id, pointsWorking(p)]));
      run = proofJobs(deps).pool.run(checked.layout.rulebook, { points });
    } catch (err) {
      if (err instanceof PoolFull) throw new HttpError(503, "busy", err.message);
      throw err;
    }
    // A caller that hangs up does not keep a core busy.
    res.on("close", () => {
      if (!res.writableFinished) run.cancel();
    });
    try {
      const body: ProofResultDto = toResultDto(await run.result, checked.layout.rulebook);
      res.json(body);
    } catch (err) {
      if (err instanceof ProofCancelled) return;
      throw err;
    }
  });

  router.post("/layouts/:slug/rulebooks/:version/proofs", requirePermission("proofs.run"), async (req, res) => {
    const version = parseWith(versionParam, req.params.version, "version number");
    const jobId = await proofJobs(deps).start(String(req.params.slug), version, req.user!);
    const body: StartProofResponse = { jobId };
    res.status(202).json(body);
  });

  router.get("/layouts/:slug/proofs", requireSignedIn, (req, res) => {
    const body: ProofJobsResponse = { jobs: proofJobs(deps).active(String(req.params.slug)) };
    res.json(body);
  });

  router.get("/proofs/:jobId", requireSignedIn, (req, res) => {
    const jobId = parseWith(jobIdParam, req.params.jobId, "job id");
    const body: ProofJobResponse = { job: proofJobs(deps).get(jobId) };
    res.json(body);
  });

  router.delete("/proofs/:jobId", requirePermission("proofs.run"), (req, res) => {
    const jobId = parseWith(jobIdParam, req.params.jobId, "job id");
    const body: ProofJobResponse = { job: proofJobs(deps).cancel(jobId, req.user!) };
    res.json(body);
  });

  return router;
}
