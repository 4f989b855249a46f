/**
 * Running sessions and their event logs. The export walks the log in keyset pages, so a
 * day of hundreds of thousands of pulses streams out in constant memory.
 */
import { QueryTypes } from "sequelize";
import type { ChangeDto, LiveEventDto, SessionDto } from "../../../shared/contract/live";
import type { AppDeps } from "../../deps";
import { notFound } from "../../http/errors";

export const EXPORT_PAGE_EVENTS = 1000;

export interface SessionSummary extends SessionDto {
  closeReason: string | null;
  eventCount: number;
}

export async function listSessions(deps: AppDeps, layoutId: number, limit = 200): Promise<SessionSummary[]> {
  const rows = await deps.db.sequelize.query<{ id: number; opened_at: Date; closed_at: Date | null; rulebook_version: number | null; close_reason: string | null; event_count: number }>(
    `SELECT s.id, s.opened_at, s.closed_at, s.rulebook_version, s.close_reason,
            (SELECT count(*) FROM events e WHERE e.session_id = s.id)::int AS event_count
       FROM sessions s WHERE s.layout_id = :layoutId ORDER BY s.opened_at DESC, s.id DESC LIMIT :limit`,
    { replacements: { layoutId, limit }, type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({
    id: r.id,
    openedAt: new Date(r.opened_at).toISOString(),
    closedAt: r.closed_at ? new Date(r.closed_at).toISOString() : null,
    rulebookVersion: r.rulebook_version,
    closeReason: r.close_reason,
    eventCount: r.event_count,
  }));
}

export async function findSession(deps: AppDeps, id: number): Promise<{ id: number; layoutId: number }> {
  const rows = await deps.db.sequelize.query<{ id: number; layout_id: number }>(`SELECT id, layout_id FROM sessions WHERE id = :id`, {
    replacements: { id },
    type: QueryTypes.SELECT,
  });
  if (!rows[0]) throw notFound(`session ${id}`);
  return { id: rows[0].id, layoutId: rows[0].layout_id };
}

export interface ExportedEvent extends LiveEventDto {
  topic: string | null;
  user: string | null;
  input: unknown;
  changes: ChangeDto[];
}

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

/** The session's events with their changes, page by page, in the order they were applied. */
export async function* sessionEvents(deps: AppDeps, sessionId: number): AsyncGenerator<ExportedEvent[]> {
  let after = "0";
  for (;;) {
    const rows = await deps.db.sequelize.query<EventRow>(
      `SELECT e.id::text, e.kind, e.status, e.reason, e.node_id, e.boot, e.seq::text, e.detector, e.received_at, e.board_t::text,
              e.topic, u.name AS user_name, e.input
         FROM events e LEFT JOIN users u ON u.id = e.user_id
        WHERE e.session_id = :sessionId AND e.id > :after ORDER BY e.id LIMIT ${EXPORT_PAGE_EVENTS}`,
      { replacements: { sessionId, after }, type: QueryTypes.SELECT },
    );
    if (rows.length === 0) return;
    const changes = await deps.db.sequelize.query<{ event_id: string; kind: string; name: string; from_value: unknown; to_value: unknown; rule: string | null; command: string | null; detail: string | null }>(
      `SELECT event_id::text, kind, name, from_value, to_value, rule, command, detail FROM changes
        WHERE event_id = ANY(:ids::bigint[]) ORDER BY event_id, id`,
      { replacements: { ids: `{${rows.map((r) => r.id).join(",")}}` }, type: QueryTypes.SELECT },
    );
    const byEvent = new Map<string, ChangeDto[]>();
    for (const c of changes) {
      const dto: ChangeDto = { kind: c.kind, name: c.name, from: c.from_value, to: c.to_value };
      if (c.rule) dto.rule = c.rule;
      if (c.command) dto.command = c.command;
      if (c.detail) dto.detail = c.detail;
      const list = byEvent.get(c.event_id) ?? [];
      list.push(dto);
      byEvent.set(c.event_id, list);
    }
    yield rows.map((r) => ({
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
    if (rows.length < EXPORT_PAGE_EVENTS) return;
    after = rows[rows.length - 1].id;
  }
}

export const CSV_COLUMNS = ["id", "receivedAt", "kind", "status", "reason", "node", "boot", "seq", "detector", "boardT", "topic", "user", "input", "changes"] as const;

function csvCell(value: unknown): string {
  if (value === null || value === undefined) return "";
  const text = typeof value === "string" ? value : typeof value === "number" ? String(value) : JSON.stringify(value);
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

export function csvRow(event: ExportedEvent): string {
  return CSV_COLUMNS.map((column) => csvCell(event[column])).join(",") + "\r\n";
}
