import { once } from "node:events";
import { Router } from "express";
import { z } from "zod";
import type { AppDeps } from "../../deps";
import { parseWith } from "../../http/errors";
import { requireSignedIn } from "../auth/middleware";
import { findLayout } from "../layouts/service";
import { CSV_COLUMNS, csvRow, findSession, listSessions, MAX_EVENT_PAGE, sessionEventPage, sessionEvents, sessionInputs } from "./service";

const exportQuerySchema = z.object({ format: z.enum(["jsonl", "csv"]).default("jsonl") });

const idText = z.string().regex(/^[A-Za-z0-9_-]{1,32}$/, "an id of letters, digits, _ or -");
/** `format=json`: one page of the log table; the filters match the table's. */
const pageQuerySchema = z.object({
  format: z.literal("json"),
  after: z.string().regex(/^\d{1,19}$/, "an event id").default("0"),
  limit: z.coerce.number().int().min(1).max(MAX_EVENT_PAGE).default(100),
  kind: z.enum(["pulse", "tick", "status", "shown", "command", "message"]).optional(),
  status: z.enum(["accepted", "duplicate", "rejected"]).optional(),
  detector: idText.optional(),
  node: idText.optional(),
  q: z.string().trim().min(1).max(200).optional(),
});

export function sessionRoutes(deps: AppDeps): Router {
  const router = Router();

  router.get("/layouts/:slug/sessions", requireSignedIn, async (req, res) => {
    const layout = await findLayout(deps, String(req.params.slug));
    res.json({ sessions: await listSessions(deps, layout.id) });
  });

  router.get("/sessions/:id/events", requireSignedIn, async (req, res) => {
    const id = parseWith(z.coerce.number().int().positive(), req.params.id, "session id");
    if (req.query.format === "json") {
      const { format: _json, ...options } = parseWith(pageQuerySchema, req.query, "query");
      await findSession(deps, id);
      res.json(await sessionEventPage(deps, id, options));
      return;
    }
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

  router.get("/sessions/:id/inputs", requireSignedIn, async (req, res) => {
    const id = parseWith(z.coerce.number().int().positive(), req.params.id, "session id");
    res.json(await sessionInputs(deps, id));
  });

  return router;
}
