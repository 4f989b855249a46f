/**
 * `GET /api/health`: the database, the broker and every running layout. 503 unless all are
 * up and every layout is live, so a supervisor or a probe sees a layout in fail-safe.
 */
import { Router } from "express";
import type { HealthResponse } from "@shared/contract/rest";
import type { AppDeps } from "../deps";
import { allowAnyone } from "./auth/middleware";

/** A database that does not answer this fast counts as down (a frozen one never answers). */
const DB_CHECK_TIMEOUT_MS = 1_000;

export function healthRoutes(deps: AppDeps): Router {
  const router = Router();
  router.get("/health", allowAnyone("health says nothing private"), async (_req, res) => {
    let db: HealthResponse["db"] = "up";
    let timer: NodeJS.Timeout | undefined;
    try {
      await Promise.race([
        deps.db.sequelize.query("SELECT 1"),
        new Promise((_, reject) => (timer = setTimeout(() => reject(new Error("timeout")), DB_CHECK_TIMEOUT_MS))),
      ]);
    } catch {
      db = "down";
    } finally {
      clearTimeout(timer);
    }
    const broker: HealthResponse["broker"] = deps.broker?.connected() ? "up" : "down";
    const layouts = deps.live?.health() ?? {};
    const allLive = Object.values(layouts).every((h) => h === "live");
    const body: HealthResponse = { ok: db === "up" && broker === "up" && allLive, db, broker, layouts };
    res.status(body.ok ? 200 : 503).json(body);
  });
  return router;
}
