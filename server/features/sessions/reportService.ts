/**
 * Reads what the running-day report needs about one session and hands it to the pure
 * {@link buildReport}: the replay inputs (the same as the replay player's), the layout's
 * detectors, signals and boards, board status messages, pulses not applied, and alarms.
 */
import { QueryTypes } from "sequelize";
import type { AlarmKind } from "@shared/contract/live";
import type { ReportAlarmDto, SessionReportDto } from "@shared/contract/report";
import type { AppDeps } from "../../deps";
import { notFound } from "../../http/errors";
import { buildReport } from "./report";
import { sessionInputs } from "./service";

interface SessionRow {
  layout_id: number;
  slug: string;
  name: string;
  opened_at: Date;
  closed_at: Date | null;
  imported_from: string | null;
  first_id: string | null;
}

export async function sessionReport(deps: AppDeps, sessionId: number, now = Date.now()): Promise<SessionReportDto> {
  const select = <T extends object>(sql: string, replacements: Record<string, unknown>) =>
    deps.db.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });
  const [session] = await select<SessionRow>(
    `SELECT s.layout_id, l.slug, l.name, s.opened_at, s.closed_at, s.imported_from,
            (SELECT min(id)::text FROM events e WHERE e.session_id = s.id) AS first_id
       FROM sessions s JOIN layouts l ON l.id = s.layout_id WHERE s.id = :sessionId`,
    { sessionId },
  );
  if (!session) throw notFound(`session ${sessionId}`);
  const layoutId = session.layout_id;
  const replay = await sessionInputs(deps, sessionId);
  const [detectors, signals, nodes, before, statuses, notApplied, alarms] = await Promise.all([
    select<{ id: string; name: string }>(`SELECT detector_id AS id, name FROM detectors WHERE layout_id = :layoutId ORDER BY position`, { layoutId }),
    select<{ id: string; name: string }>(`SELECT signal_id AS id, name FROM signals WHERE layout_id = :layoutId ORDER BY position`, { layoutId }),
    select<{ id: string; name: string }>(`SELECT node_id AS id, name FROM nodes WHERE layout_id = :layoutId ORDER BY position`, { layoutId }),
    // A board's state when the session opened: its last status before the session (live sessions only).
    session.imported_from !== null || session.first_id === null
      ? Promise.resolve([])
      : select<{ node_id: string; online: boolean }>(
          `SELECT DISTINCT ON (node_id) node_id, (input->>'online')::boolean AS online FROM events
            WHERE layout_id = :layoutId AND kind = 'status' AND status = 'accepted' AND NOT imported AND id < :firstId
            ORDER BY node_id, id DESC`,
          { layoutId, firstId: session.first_id },
        ),
    select<{ node_id: string; received_at: Date; online: boolean }>(
      `SELECT node_id, received_at, (input->>'online')::boolean AS online FROM events
        WHERE session_id = :sessionId AND kind = 'status' AND status = 'accepted' AND input->'online' IS NOT NULL ORDER BY id`,
      { sessionId },
    ),
    select<{ detector: string; status: "rejected" | "duplicate"; n: number }>(
      `SELECT detector, status, count(*)::int AS n FROM events
        WHERE session_id = :sessionId AND kind = 'pulse' AND status <> 'accepted' AND detector IS NOT NULL GROUP BY detector, status`,
      { sessionId },
    ),
    select<{ id: number; kind: AlarmKind; subject: string | null; message: string; raised_at: Date; cleared_at: Date | null; acknowledged_at: Date | null }>(
      `SELECT id, kind, subject, message, raised_at, cleared_at, acknowledged_at FROM alarms WHERE session_id = :sessionId ORDER BY raised_at, id`,
      { sessionId },
    ),
  ]);
  const notAppliedByDetector: Record<string, { rejected: number; duplicate: number }> = {};
  for (const row of notApplied) {
    const entry = (notAppliedByDetector[row.detector] ??= { rejected: 0, duplicate: 0 });
    entry[row.status] += row.n;
  }
  const isoOrNull = (d: Date | null) => (d ? new Date(d).toISOString() : null);
  return buildReport({
    sessionId,
    layout: { slug: session.slug, name: session.name },
    rulebookVersion: replay.rulebookVersion,
    rulebook: replay.rulebook,
    start: replay.start,
    inputs: replay.inputs.map((input, i) => ({ input, eventId: replay.eventIds[i] ?? null })),
    from: new Date(session.opened_at).getTime(),
    until: session.closed_at ? new Date(session.closed_at).getTime() : now,
    open: session.closed_at === null,
    importedFrom: session.imported_from,
    detectors,
    signals,
    nodes,
    onlineAtStart: Object.fromEntries(before.map((b) => [b.node_id, b.online === true])),
    statuses: statuses.map((s) => ({ node: s.node_id, at: new Date(s.received_at).getTime(), online: s.online === true })),
    notApplied: notAppliedByDetector,
    alarms: alarms.map(
      (a): ReportAlarmDto => ({
        id: a.id,
        kind: a.kind,
        subject: a.subject,
        message: a.message,
        raisedAt: new Date(a.raised_at).toISOString(),
        clearedAt: isoOrNull(a.cleared_at),
        acknowledgedAt: isoOrNull(a.acknowledged_at),
      }),
    ),
  });
}
