/**
 * Running sessions and their event logs. The export walks the log in keyset pages, so a
 * day of hundreds of thousands of pulses streams out in constant memory.
 */
import { QueryTypes } from "sequelize";
import type { ChangeDto, LiveEventDto } from "@shared/contract/live";
import type { SessionEventDto, SessionEventFilter, SessionEventPage, SessionInputsResponse, SessionSummaryDto } from "@shared/contract/sessions";
import { initialState, step, type EngineInput, type EngineState } from "@shared/rulebook/engine";
import type { Rulebook } from "@shared/rulebook/schema";
import type { AppDeps } from "../../deps";
import { notFound } from "../../http/errors";
import { acceptedInputRows, acceptedInputs, latestSnapshot, NO_ID_LIMIT, sequelizeQuery } from "../../runtime/eventLog";

export const EXPORT_PAGE_EVENTS = 1000;

export type SessionSummary = SessionSummaryDto;

export async function listSessions(deps: AppDeps, layoutId: number, limit = 200): Promise<SessionSummary[]> {
  const rows = await deps.db.sequelize.query<{ id: number; opened_at: Date; closed_at: Date | null; rulebook_version: number | null; close_reason: string | null; imported_from: string | null; event_count: number; opened_by: string | null; closed_by: string | null; note: string | null }>(
    `SELECT s.id, s.opened_at, s.closed_at, s.rulebook_version, s.close_reason, s.imported_from, s.note,
            o.name AS opened_by, c.name AS closed_by,
            (SELECT count(*) FROM events e WHERE e.session_id = s.id)::int AS event_count
       FROM sessions s LEFT JOIN users o ON o.id = s.opened_by LEFT JOIN users c ON c.id = s.closed_by
      WHERE s.layout_id = :layoutId ORDER BY s.opened_at DESC, s.id DESC LIMIT :limit`,
    { replacements: { layoutId, limit }, type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({
    id: r.id,
    openedAt: new Date(r.opened_at).toISOString(),
    closedAt: r.closed_at ? new Date(r.closed_at).toISOString() : null,
    rulebookVersion: r.rulebook_version,
    closeReason: r.close_reason,
    importedFrom: r.imported_from,
    eventCount: r.event_count,
    openedBy: r.opened_by,
    closedBy: r.closed_by,
    note: r.note,
  }));
}

/** After the live page opened or closed a session: who closed it, and the signaller's note (appended, one per line). */
export async function recordSessionControl(deps: AppDeps, sessionId: number | undefined, action: "open" | "close", userId: number, note: string | null): Promise<void> {
  if (!sessionId) return;
  const line = note ? `${action === "open" ? "Opened" : "Closed"}: ${note}` : null;
  await deps.db.sequelize.query(
    `UPDATE sessions SET closed_by = CASE WHEN :close THEN :userId ELSE closed_by END,
            note = CASE WHEN CAST(:line AS text) IS NULL THEN note WHEN note IS NULL THEN :line ELSE note || E'\n' || :line END
      WHERE id = :sessionId`,
    { replacements: { close: action === "close", userId, line, sessionId } },
  );
}

export async function findSession(deps: AppDeps, id: number): Promise<{ id: number; layoutId: number }> {
  const rows = await deps.db.sequelize.query<{ id: number; layout_id: number }>(`SELECT id, layout_id FROM sessions WHERE id = :id`, {
    replacements: { id },
    type: QueryTypes.SELECT,
  });
  if (!rows[0]) throw notFound(`session ${id}`);
  return { id: rows[0].id, layoutId: rows[0].layout_id };
}

export type ExportedEvent = SessionEventDto;

interface EventRow {
  id: string;
  kind: LiveEventDto["kind"];
  status: LiveEventDto["status"];
  reason: string | null;
  node_id: string | null;
  boot: string | null;
  seq: string | null;
  detector: string | null;
  received_at: Date;
  board_t: string | null;
  topic: string | null;
  user_name: string | null;
  input: unknown;
}

const EVENT_COLUMNS = `e.id::text, e.kind, e.status, e.reason, e.node_id, e.boot, e.seq::text, e.detector, e.received_at, e.board_t::text,
              e.topic, u.name AS user_name, e.input`;

/** Rows of `events` (with the user's name) as the log shows them, each with its changes. */
async function withChanges(deps: AppDeps, rows: EventRow[]): Promise<ExportedEvent[]> {
  if (rows.length === 0) return [];
  const changes = await deps.db.sequelize.query<{ event_id: string; kind: ChangeDto["kind"]; name: string; from_value: unknown; to_value: unknown; rule: string | null; command: string | null; detail: string | null }>(
    `SELECT event_id::text, kind, name, from_value, to_value, rule, command, detail FROM changes
      WHERE event_id = ANY(:ids::bigint[]) ORDER BY event_id, id`,
    { replacements: { ids: `{${rows.map((r) => r.id).join(",")}}` }, type: QueryTypes.SELECT },
  );
  const byEvent = new Map<string, ChangeDto[]>();
  for (const c of changes) {
    // The runner and the import store the engine's changes as they came out of `step`, so a
    // row's kind and values agree as `Change` says; the database does not check that.
    const dto = { kind: c.kind, name: c.name, from: c.from_value, to: c.to_value } as ChangeDto;
    if (c.rule) dto.rule = c.rule;
    if (c.command) dto.command = c.command;
    if (c.detail) dto.detail = c.detail;
    const list = byEvent.get(c.event_id) ?? [];
    list.push(dto);
    byEvent.set(c.event_id, list);
  }
  return rows.map((r) => ({
    id: r.id,
    kind: r.kind,
    status: r.status,
    reason: r.reason,
    node: r.node_id,
    boot: r.boot,
    seq: r.seq === null ? null : Number(r.seq),
    detector: r.detector,
    receivedAt: new Date(r.received_at).toISOString(),
    boardT: r.board_t === null ? null : Number(r.board_t),
    topic: r.topic,
    user: r.user_name,
    input: r.input,
    changes: byEvent.get(r.id) ?? [],
  }));
}

/** The session's events with their changes, page by page, in the order they were applied. */
export async function* sessionEvents(deps: AppDeps, sessionId: number): AsyncGenerator<ExportedEvent[]> {
  let after = "0";
  for (;;) {
    const rows = await deps.db.sequelize.query<EventRow>(
      `SELECT ${EVENT_COLUMNS}
         FROM events e LEFT JOIN users u ON u.id = e.user_id
        WHERE e.session_id = :sessionId AND e.id > :after ORDER BY e.id LIMIT ${EXPORT_PAGE_EVENTS}`,
      { replacements: { sessionId, after }, type: QueryTypes.SELECT },
    );
    if (rows.length === 0) return;
    yield await withChanges(deps, rows);
    if (rows.length < EXPORT_PAGE_EVENTS) return;
    after = rows[rows.length - 1].id;
  }
}

/** Most events one page of the log table may ask for. */
export const MAX_EVENT_PAGE = 500;

/** Escapes LIKE wildcards so a search for "50%" finds the text "50%". */
const likePattern = (text: string) => `%${text.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;

/**
 * One keyset page of the session's log under the filters, oldest first, with the number of
 * matching events in the whole session. Keyset (`id > after`) keeps a page deep in a day of
 * hundreds of thousands of pulses as quick as the first.
 */
export async function sessionEventPage(
  deps: AppDeps,
  sessionId: number,
  options: SessionEventFilter & { after: string; limit: number; tail?: number },
): Promise<SessionEventPage> {
  const where = ["e.session_id = :sessionId"];
  const replacements: Record<string, unknown> = { sessionId, after: options.after, limit: options.limit + 1 };
  for (const [column, key] of [["kind", "kind"], ["status", "status"], ["detector", "detector"], ["node_id", "node"]] as const) {
    if (options[key] === undefined) continue;
    where.push(`e.${column} = :${key}`);
    replacements[key] = options[key];
  }
  if (options.q) {
    where.push(`e.reason ILIKE :q`);
    replacements.q = likePattern(options.q);
  }
  const filter = where.join(" AND ");
  if (options.tail !== undefined) {
    const [newest, total] = await Promise.all([
      deps.db.sequelize.query<EventRow>(
        `SELECT ${EVENT_COLUMNS} FROM events e LEFT JOIN users u ON u.id = e.user_id WHERE ${filter} ORDER BY e.id DESC LIMIT :tail`,
        { replacements: { ...replacements, tail: options.tail }, type: QueryTypes.SELECT },
      ),
      deps.db.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM events e WHERE ${filter}`, { replacements, type: QueryTypes.SELECT }),
    ]);
    return { events: await withChanges(deps, newest.reverse()), total: total[0].n, next: null };
  }
  const [rows, counted] = await Promise.all([
    deps.db.sequelize.query<EventRow>(
      `SELECT ${EVENT_COLUMNS}
         FROM events e LEFT JOIN users u ON u.id = e.user_id
        WHERE ${filter} AND e.id > :after ORDER BY e.id LIMIT :limit`,
      { replacements, type: QueryTypes.SELECT },
    ),
    deps.db.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM events e WHERE ${filter}`, { replacements, type: QueryTypes.SELECT }),
  ]);
  const more = rows.length > options.limit;
  const page = more ? rows.slice(0, options.limit) : rows;
  return { events: await withChanges(deps, page), total: counted[0].n, next: more ? page[page.length - 1].id : null };
}

/**
 * The session's engine inputs in the order the runner applied them, and the engine state
 * just before the first. The live state carries over between sessions, so the start is
 * rebuilt the way the runner recovers: the latest snapshot before the session, then the
 * accepted inputs after it; the rulebook's initial values when that snapshot is of another
 * version (the runner restarts from them then too).
 */
export async function sessionInputs(deps: AppDeps, sessionId: number): Promise<SessionInputsResponse & { rulebook: Rulebook }> {
  const sessions = await deps.db.sequelize.query<{ layout_id: number; opened_at: Date; rulebook_version: number | null; imported_from: string | null; first_id: string | null }>(
    `SELECT s.layout_id, s.opened_at, s.rulebook_version, s.imported_from, (SELECT min(id)::text FROM events e WHERE e.session_id = s.id) AS first_id
       FROM sessions s WHERE s.id = :sessionId`,
    { replacements: { sessionId }, type: QueryTypes.SELECT },
  );
  const session = sessions[0];
  if (!session) throw notFound(`session ${sessionId}`);
  const layoutId = session.layout_id;
  const version = session.rulebook_version;
  const inputs: EngineInput[] = [];
  const query = sequelizeQuery(deps.db.sequelize);
  const eventIds: string[] = [];
  for await (const row of acceptedInputRows(query, { sessionId })) {
    inputs.push(row.input);
    eventIds.push(row.eventId);
  }

  const rulebooks = await deps.db.sequelize.query<{ rulebook: Rulebook }>(
    `SELECT rulebook FROM rulebook_versions WHERE layout_id = :layoutId AND version = :version`,
    { replacements: { layoutId, version: version ?? 0 }, type: QueryTypes.SELECT },
  );
  const rulebook = rulebooks[0]?.rulebook;
  if (!rulebook) throw notFound(`rulebook version ${version} of session ${sessionId}`);
  // An uploaded log carries no state from before it: it replays from the rulebook's initial values.
  if (session.imported_from !== null) {
    return { sessionId, rulebookVersion: version, start: initialState(rulebook, new Date(session.opened_at).getTime()), inputs, eventIds, rulebookSwitches: [], rulebook };
  }
  const firstId = session.first_id ?? NO_ID_LIMIT;
  const snapshot = await latestSnapshot(query, layoutId, firstId);
  let start: EngineState;
  if (snapshot && snapshot.rulebook_version === version) {
    start = snapshot.state.engine;
    const before = acceptedInputs(query, { layoutId, beforeId: firstId }, snapshot.last_event_id);
    for await (const input of before) start = step(rulebook, start, input).state;
  } else {
    start = initialState(rulebook, new Date(session.opened_at).getTime());
  }

  // A rulebook published mid-session writes a snapshot of the new version inside the session.
  const switches = await deps.db.sequelize.query<{ rulebook_version: number }>(
    `SELECT DISTINCT rulebook_version FROM snapshots
      WHERE layout_id = :layoutId AND rulebook_version <> :version AND last_event_id >= :firstId
        AND last_event_id <= (SELECT coalesce(max(id), 0) FROM events WHERE session_id = :sessionId)
      ORDER BY rulebook_version`,
    { replacements: { layoutId, version: version ?? 0, firstId, sessionId }, type: QueryTypes.SELECT },
  );
  return { sessionId, rulebookVersion: version, start, inputs, eventIds, rulebookSwitches: switches.map((s) => s.rulebook_version), rulebook };
}
