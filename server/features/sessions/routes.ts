import { once } from "node:events";
import { Router, type RequestHandler } from "express";
import multer from "multer";
import { z } from "zod";
import { EVENT_KINDS, EVENT_STATUSES } from "@shared/contract/live";
import type { AppDeps } from "../../deps";
import { eventIdText } from "../../http/bounds";
import { badRequest, HttpError, parseWith } from "../../http/errors";
import { requirePermission, requireSignedIn } from "../auth/middleware";
import { EVENT_CSV_HEADER, eventCsvRow } from "./eventCsv";
import { ensureImportReplayed } from "./importReplay";
import { importFormat, importSession, invalidLog, MAX_IMPORT_BYTES, parseEventLog } from "./import";
import { findLayout, refuseIfArchived } from "../../data/layouts";
import { REPORT_TABLES, reportCsv } from "./reportCsv";
import { sessionReport } from "./reportService";
import { findSession, listSessions, MAX_EVENT_PAGE, sessionEventPage, sessionEvents, sessionInputs } from "./service";

const exportQuerySchema = z.object({ format: z.enum(["jsonl", "csv"]).default("jsonl") });


const idText = z.string().regex(/^[A-Za-z0-9_-]{1,32}$/, "an id of letters, digits, _ or -");
/** `format=json`: one page of the log table; the filters match the table's. */
const pageQuerySchema = z.object({
  format: z.literal("json"),
  after: eventIdText.default("0"),
  limit: z.coerce.number().int().min(1).max(MAX_EVENT_PAGE).default(100),
  kind: z.enum(EVENT_KINDS).optional(),
  status: z.enum(EVENT_STATUSES).optional(),
  detector: idText.optional(),
  node: idText.optional(),
  q: z.string().trim().min(1).max(200).optional(),
  /** The last N matching events instead of a page from `after` (the live ticker's history on load). */
  tail: z.coerce.number().int().min(1).max(MAX_EVENT_PAGE).optional(),
});

const reportQuerySchema = z.object({ format: z.enum(["json", "csv"]).default("json"), table: z.enum(REPORT_TABLES).default("routes") });

const importFieldsSchema = z.object({ rulebookVersion: z.union([z.literal(""), z.coerce.number().int().positive()]).optional() });

/** One file in memory, at most MAX_IMPORT_BYTES; multer's own errors become the one error shape. */
const uploadOneFile = multer({ storage: multer.memoryStorage(), limits: { fileSize: MAX_IMPORT_BYTES, files: 1, fields: 4 } }).single("file");
const oneLogFile: RequestHandler = (req, res, next) => {
  uploadOneFile(req, res, (err: unknown) => {
    if (!err) return next();
    if (err instanceof multer.MulterError && err.code === "LIMIT_FILE_SIZE") {
      return next(new HttpError(413, "too_large", `the file is over ${MAX_IMPORT_BYTES / 1024 / 1024} MB`));
    }
    // Anything else (a second file, a torn multipart body) is the client's request, not our fault.
    next(badRequest(`the upload is not one event-log file: ${err instanceof Error ? err.message : String(err)}`));
  });
};

export function sessionRoutes(deps: AppDeps): Router {
  const router = Router();

  router.get("/layouts/:slug/sessions", requireSignedIn, async (req, res) => {
    const layout = await findLayout(deps, String(req.params.slug));
    res.json({ sessions: await listSessions(deps, layout.id) });
  });

  router.post("/layouts/:slug/sessions/import", requirePermission("sessions.import"), oneLogFile, async (req, res) => {
    const layout = await findLayout(deps, String(req.params.slug));
    refuseIfArchived(layout);
    if (!req.file) throw badRequest("attach the event log as the form field \"file\"");
    const { rulebookVersion } = parseWith(importFieldsSchema, req.body ?? {}, "form");
    const text = req.file.buffer.toString("utf8");
    const parsed = await parseEventLog(text, importFormat(req.file.originalname, text));
    if (!parsed.ok) throw invalidLog(parsed.errors);
    const created = await importSession(deps, parsed.events, {
      layoutId: layout.id,
      liveVersion: layout.liveVersion,
      rulebookVersion: rulebookVersion === "" ? undefined : rulebookVersion,
      fileName: req.file.originalname.slice(0, 200),
      userId: req.user!.id,
    });
    res.status(201).json(created);
  });

  router.get("/sessions/:id/events", requireSignedIn, async (req, res) => {
    const id = parseWith(z.coerce.number().int().positive(), req.params.id, "session id");
    if (req.query.format === "json") {
      const { format: _json, ...options } = parseWith(pageQuerySchema, req.query, "query");
      await findSession(deps, id);
      await ensureImportReplayed(deps, id);
      res.json(await sessionEventPage(deps, id, options));
      return;
    }
    const { format } = parseWith(exportQuerySchema, req.query, "query");
    await findSession(deps, id);
    await ensureImportReplayed(deps, id);
    res.status(200);
    res.setHeader("Content-Type", format === "csv" ? "text/csv; charset=utf-8" : "application/x-ndjson; charset=utf-8");
    res.setHeader("Content-Disposition", `attachment; filename="session-${id}.${format}"`);
    if (format === "csv") res.write(EVENT_CSV_HEADER);
    let aborted = false;
    res.on("close", () => (aborted = !res.writableFinished));
    for await (const page of sessionEvents(deps, id)) {
      if (aborted) return;
      const chunk = page.map((event) => (format === "csv" ? eventCsvRow(event) : JSON.stringify(event) + "\n")).join("");
      // Respect backpressure: a slow reader holds the next page back, memory stays flat.
      if (!res.write(chunk)) await Promise.race([once(res, "drain"), once(res, "close")]);
    }
    res.end();
  });

  router.get("/sessions/:id/inputs", requireSignedIn, async (req, res) => {
    const id = parseWith(z.coerce.number().int().positive(), req.params.id, "session id");
    const { rulebook: _rulebook, ...inputs } = await sessionInputs(deps, id);
    res.json(inputs);
  });

  router.get("/sessions/:id/report", requireSignedIn, async (req, res) => {
    const id = parseWith(z.coerce.number().int().positive(), req.params.id, "session id");
    const { format, table } = parseWith(reportQuerySchema, req.query, "query");
    const report = await sessionReport(deps, id);
    if (format === "json") {
      res.json(report);
      return;
    }
    res.setHeader("Content-Type", "text/csv; charset=utf-8");
    res.setHeader("Content-Disposition", `attachment; filename="session-${id}-${table}.csv"`);
    res.send(reportCsv(report, table));
  });

  return router;
}
