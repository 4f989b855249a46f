import { once } from "node:events";
import { Router } from "express";
import { z } from "zod";
import type { AppDeps } from "../../deps";
import { parseWith } from "../../http/errors";
import { requireSignedIn } from "../auth/middleware";
import { findLayout } from "../layouts/service";
import { CSV_COLUMNS, csvRow, findSession, listSessions, sessionEvents } from "./service";

const exportQuerySchema = z.object({ format: z.enum(["jsonl", "csv"]).default("jsonl") });

export function sessionRoutes(deps: AppDeps): Router {
  const router = Router();

  router.get("/layouts/:slug/sessions", requireSignedIn, async (req, res) => {
    const layout = await findLayout(deps, String(req.params.slug));
    res.json({ sessions: await listSessions(deps, layout.id) });
  });

  router.get("/sessions/:id/events", requireSignedIn, async (req, res) => {
    const id = parseWith(z.coerce.number().int().positive(), req.params.id, "session id");
    const { format } = parseWith(exportQuerySchema, req.query, "query");
    await findSession(deps, id);
    res.status(200);
    res.setHeader("Content-Type", format === "csv" ? "text/csv; charset=utf-8" : "application/x-ndjson; charset=utf-8");
    res.setHeader("Content-Disposition", `attachment; filename="session-${id}.${format}"`);
    if (format === "csv") res.write(CSV_COLUMNS.join(",") + "\r\n");
    let aborted = false;
    res.on("close", () => (aborted = !res.writableFinished));
    for await (const page of sessionEvents(deps, id)) {
      if (aborted) return;
      const chunk = page.map((event) => (format === "csv" ? csvRow(event) : JSON.stringify(event) + "\n")).join("");
      // Respect backpressure: a slow reader holds the next page back, memory stays flat.
      if (!res.write(chunk)) await Promise.race([once(res, "drain"), once(res, "close")]);
    }
    res.end();
  });

  return router;
}
