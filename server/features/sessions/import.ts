/**
 * Importing an event log (PRODUCT.md feature 8): a file in the export's own format (JSONL or
 * CSV, `GET /api/sessions/:id/events`) becomes a new, closed session marked as imported.
 * Every line is checked before anything is stored, and every problem is reported with its
 * line. The changes of the original are not imported: they are recomputed by replaying the
 * inputs through the engine (./importReplay.ts) and stored in the same transaction. Imported
 * events never pass through the live runner (see docs/live-pipeline.md).
 */
import { QueryTypes } from "sequelize";
import { z } from "zod";
import { EVENT_KINDS, EVENT_STATUSES } from "@shared/contract/live";
import type { EngineInput } from "@shared/rulebook/engine";
import type { AppDeps } from "../../deps";
import { jsonBodyProblems } from "../../http/bodyGuard";
import { badRequest, HttpError } from "../../http/errors";
import { storeImportedChanges } from "./importReplay";
import { csvLayout, csvRecords, flatRecord, jsonCellRecord } from "./eventCsv";

/** Largest upload accepted; a busy day's log is a few MB. */
export const MAX_IMPORT_BYTES = 20 * 1024 * 1024;
/** Errors listed in a 400; the rest are counted. */
export const MAX_LISTED_ERRORS = 200;
/**
 * Lines checked between yields to the event loop: the live runner shares this process, and a
 * 20 MB log checked in one go would hold its pulses back for about half a second.
 */
const LINES_PER_TURN = 2_000;
const nextTurn = () => new Promise<void>((resolve) => setImmediate(resolve));
/** Events written per INSERT inside the one transaction. */
const INSERT_CHUNK_EVENTS = 5_000;

export type ImportFormat = "jsonl" | "csv";

const name = z.string().min(1).max(64);
const at = z.number().int().nonnegative();
const by = { by: z.string().max(200).optional(), reason: z.string().max(2000).optional() };
/** What the runner gives the engine for a tick or a command (shared/rulebook/engine.ts `EngineInput`). */
const engineInputSchema = z.union([
  z.object({ type: z.literal("tick"), at }),
  z.object({ type: z.literal("command"), at, command: z.enum(["hold", "release"]), signal: name, ...by }),
  z.object({ type: z.literal("command"), at, command: z.enum(["set", "clear"]), latch: name, ...by }),
  z.object({ type: z.literal("command"), at, command: z.literal("zero"), counter: name, ...by }),
  z.object({ type: z.literal("command"), at, command: z.literal("restart"), ...by }),
]);
// Written out for its bounds; fails to compile if the schema lets through what `EngineInput` does not allow.
type _EngineInputFits = Assignable<z.infer<typeof engineInputSchema>, EngineInput>;
type Assignable<T extends U, U> = [T, U];

/** One exported event (`SessionEventDto`); `id`, `user` and `changes` are read but not kept. */
const importedEventSchema = z
  .object({
    id: z.string().regex(/^\d{1,19}$/, "an event id").nullish(),
    kind: z.enum(EVENT_KINDS),
    status: z.enum(EVENT_STATUSES),
    reason: z.string().max(2000).nullish(),
    node: z.string().max(64).nullish(),
    boot: z.string().max(64).nullish(),
    seq: z.number().int().nonnegative().max(Number.MAX_SAFE_INTEGER).nullish(),
    detector: z.string().max(64).nullish(),
    receivedAt: z.iso.datetime({ offset: true }),
    boardT: z.number().int().nullish(),
    topic: z.string().max(1024).nullish(),
    user: z.string().max(200).nullish(),
    rawPayload: z.string().max(64 * 1024).nullish(),
    input: z.unknown().optional(),
    changes: z.array(z.unknown()).nullish(),
  })
  .superRefine((event, ctx) => {
    if (event.status !== "accepted") return;
    if (event.kind === "pulse" && !event.detector) ctx.addIssue({ code: "custom", path: ["detector"], message: "an accepted pulse names its detector" });
    if (event.kind === "tick" || event.kind === "command") {
      const input = engineInputSchema.safeParse(event.input);
      if (!input.success) ctx.addIssue({ code: "custom", path: ["input"], message: `an accepted ${event.kind} carries the engine input it applied` });
      else if (input.data.type !== event.kind) ctx.addIssue({ code: "custom", path: ["input", "type"], message: `expected "${event.kind}"` });
    }
  });

export type ImportedEvent = z.infer<typeof importedEventSchema>;

export interface LineError {
  path: string;
  message: string;
}

export type ParsedLog = { ok: true; events: ImportedEvent[] } | { ok: false; errors: LineError[] };

const lineError = (line: number, path: string, message: string): LineError => ({ path: path ? `line ${line}: ${path}` : `line ${line}`, message });

function checkEvent(value: unknown, line: number, events: ImportedEvent[], errors: LineError[], rename: Record<string, string> = {}): void {
  // A NUL or absurd nesting would pass the schema and then fail in PostgreSQL (a 500).
  const hostile = jsonBodyProblems(value);
  if (hostile.length > 0) {
    for (const problem of hostile) errors.push(lineError(line, problem.path.replace(/^\$\.?/, ""), problem.message));
    return;
  }
  const result = importedEventSchema.safeParse(value);
  if (result.success) events.push(result.data);
  else for (const issue of result.error.issues) errors.push(lineError(line, issue.path.map((p) => rename[String(p)] ?? String(p)).join("."), issue.message));
}

async function parseJsonl(text: string, events: ImportedEvent[], errors: LineError[]): Promise<void> {
  const lines = text.split("\n");
  for (let index = 0; index < lines.length; index++) {
    if (index % LINES_PER_TURN === LINES_PER_TURN - 1) await nextTurn();
    const line = lines[index].replace(/\r$/, "");
    if (line.trim() === "") continue;
    let value: unknown;
    try {
      value = JSON.parse(line);
    } catch {
      errors.push(lineError(index + 1, "", "not a JSON object"));
      continue;
    }
    checkEvent(value, index + 1, events, errors);
  }
}

async function parseCsv(text: string, events: ImportedEvent[], errors: LineError[]): Promise<void> {
  const records = csvRecords(text);
  const header = records.next();
  if (header.done) return;
  const columns = header.value.cells;
  const layout = csvLayout(columns);
  if (!layout.ok) {
    errors.push(lineError(1, "header", layout.message));
    return;
  }
  const read = layout.layout === "flat" ? flatRecord : jsonCellRecord;
  let count = 0;
  for (const { line, cells } of records) {
    if (++count % LINES_PER_TURN === 0) await nextTurn();
    if (cells.length !== columns.length) {
      errors.push(lineError(line, "", `${cells.length} cells where the header has ${columns.length}`));
      continue;
    }
    const record = read(columns, cells);
    for (const e of record.errors) errors.push(lineError(line, e.column, e.message));
    if (layout.layout === "json-cells" && record.errors.length) continue;
    // The flat file has no `input` column: a missing command input is the `command` column's fault.
    checkEvent(record.value, line, events, errors, layout.layout === "flat" ? { input: "command" } : undefined);
  }
}

/** Reads a whole exported log; every problem of every line is reported, none stored. */
export async function parseEventLog(text: string, format: ImportFormat): Promise<ParsedLog> {
  const events: ImportedEvent[] = [];
  const errors: LineError[] = [];
  const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  if (format === "jsonl") await parseJsonl(body, events, errors);
  else await parseCsv(body, events, errors);
  if (errors.length) return { ok: false, errors };
  if (events.length === 0) return { ok: false, errors: [{ path: "file", message: "the file holds no events" }] };
  return { ok: true, events };
}

/** The 400 for a log with errors: the first MAX_LISTED_ERRORS, then how many more. */
export function invalidLog(errors: LineError[]): HttpError {
  const listed = errors.slice(0, MAX_LISTED_ERRORS);
  if (errors.length > listed.length) listed.push({ path: "file", message: `and ${errors.length - listed.length} more error(s)` });
  return new HttpError(400, "invalid_event_log", `the event log has ${errors.length} error(s); nothing was imported`, listed);
}

/** The format from the file name (`.jsonl`/`.ndjson`/`.csv`), else from its first character. */
export function importFormat(fileName: string, text: string): ImportFormat {
  if (/\.(jsonl|ndjson)$/i.test(fileName)) return "jsonl";
  if (/\.csv$/i.test(fileName)) return "csv";
  return text.replace(/^\uFEFF/, "").trimStart().startsWith("{") ? "jsonl" : "csv";
}

export interface ImportOptions {
  layoutId: number;
  liveVersion: number | null;
  rulebookVersion?: number;
  fileName: string;
  userId: number | null;
}

/**
 * Stores the log as a new closed session in one transaction: opened at its first event,
 * closed at its last, on the given rulebook version (else the layout's live one).
 */
export async function importSession(deps: AppDeps, events: ImportedEvent[], options: ImportOptions): Promise<{ sessionId: number; events: number }> {
  const version = options.rulebookVersion ?? options.liveVersion;
  if (version === null) throw badRequest("the layout has no live rulebook; name a rulebook version");
  const sequelize = deps.db.sequelize;
  const known = await sequelize.query<{ version: number }>(`SELECT version FROM rulebook_versions WHERE layout_id = :layoutId AND version = :version`, {
    replacements: { layoutId: options.layoutId, version },
    type: QueryTypes.SELECT,
  });
  if (!known[0]) throw new HttpError(400, "invalid_input", `the layout has no rulebook version ${version}`, [{ path: "$.rulebookVersion", message: "not a version of this layout" }]);

  const times = events.map((e) => Date.parse(e.receivedAt));
  const openedAt = new Date(times.reduce((a, b) => Math.min(a, b)));
  const closedAt = new Date(times.reduce((a, b) => Math.max(a, b)));
  return sequelize.transaction(async (transaction) => {
    const [session] = await sequelize.query<{ id: number }>(
      `INSERT INTO sessions (layout_id, rulebook_version, opened_at, closed_at, opened_by, close_reason, imported_from)
       VALUES (:layoutId, :version, :openedAt, :closedAt, :userId, 'imported', :fileName) RETURNING id`,
      {
        replacements: { layoutId: options.layoutId, version, openedAt, closedAt, userId: options.userId, fileName: options.fileName },
        type: QueryTypes.SELECT,
        transaction,
      },
    );
    for (let from = 0; from < events.length; from += INSERT_CHUNK_EVENTS) {
      const chunk = events.slice(from, from + INSERT_CHUNK_EVENTS);
      // ORDER BY ord: ids follow the file's order, which is the order the replay applies.
      await sequelize.query(
        `INSERT INTO events (layout_id, session_id, imported, kind, status, reason, node_id, boot, seq, detector, received_at, board_t,
                             topic, raw_payload, input)
         SELECT $1, $2, true, kind, status, reason, node_id, boot, seq, detector, received_at, board_t, topic, raw_payload, input
           FROM unnest($3::text[], $4::text[], $5::text[], $6::text[], $7::text[], $8::bigint[], $9::text[], $10::timestamptz[],
                       $11::bigint[], $12::text[], $13::text[], $14::jsonb[])
                WITH ORDINALITY AS t(kind, status, reason, node_id, boot, seq, detector, received_at, board_t, topic, raw_payload, input, ord)
          ORDER BY ord`,
        {
          bind: [
            options.layoutId,
            session.id,
            chunk.map((e) => e.kind),
            chunk.map((e) => e.status),
            chunk.map((e) => e.reason ?? null),
            chunk.map((e) => e.node ?? null),
            chunk.map((e) => e.boot ?? null),
            chunk.map((e) => (e.seq === null || e.seq === undefined ? null : String(e.seq))),
            chunk.map((e) => e.detector ?? null),
            chunk.map((e) => e.receivedAt),
            chunk.map((e) => (e.boardT === null || e.boardT === undefined ? null : String(e.boardT))),
            chunk.map((e) => e.topic ?? null),
            chunk.map((e) => e.rawPayload ?? null),
            chunk.map((e) => (e.input === null || e.input === undefined ? null : JSON.stringify(e.input))),
          ],
          transaction,
        },
      );
    }
    await storeImportedChanges(deps, session.id, transaction);
    await sequelize.query(
      `INSERT INTO audit_entries (layout_id, user_id, action, target, reason, after)
       VALUES (:layoutId, :userId, 'session-imported', :target, :reason, :after)`,
      {
        replacements: {
          layoutId: options.layoutId,
          userId: options.userId,
          target: `session ${session.id}`,
          reason: `event log uploaded from ${options.fileName}`,
          after: JSON.stringify({ sessionId: session.id, events: events.length, rulebookVersion: version }),
        },
        transaction,
      },
    );
    return { sessionId: session.id, events: events.length };
  });
}
