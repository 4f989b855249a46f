import { Router } from "express";
import type { HealthResponse } from "../../shared/contract/rest";
import type { AppDeps } from "../deps";
import { allowAnyone } from "./auth/middleware";

export function healthRoutes(deps: AppDeps): Router {
  const router = Router();
  router.get("/health", allowAnyone("health says nothing private"), async (_req, res) => {
    let db: HealthResponse["db"] = "up";
    try {
      await deps.db.sequelize.query("SELECT 1");
    } catch {
      db = "down";
    }
    const broker: HealthResponse["broker"] = deps.broker?.connected() ? "up" : "down";
    const body: HealthResponse = { ok: db === "up" && broker === "up", db, broker };
    res.status(body.ok ? 200 : 503).json(body);
  });
  return router;
}
