/**
 * Alarms: raised by the live pipeline (and later by watchers), acknowledged by a signaller,
 * maintainer or admin with a comment, cleared when the condition is gone. An alarm that is
 * already open with the same kind, subject and message is not raised twice.
 */
import { QueryTypes } from "sequelize";
import type { AlarmDto, AlarmKind } from "../../../shared/contract/live";
import type { AppDeps } from "../../deps";
import type { AlarmPort } from "../../runtime/ports";
import { notFound } from "../../http/errors";

export interface RaiseAlarmInput {
  layoutId: number;
  kind: AlarmKind;
  subject: string | null;
  message: string;
  eventId?: string | number | null;
  sessionId?: number | null;
}

interface AlarmRow {
  id: number;
  layout_id: number;
  slug: string;
  kind: AlarmKind;
  subject: string | null;
  message: string;
  raised_at: Date;
  acknowledged_at: Date | null;
  acknowledged_by_name: string | null;
  ack_comment: string | null;
  cleared_at: Date | null;
}

const SELECT_ALARM = `
  SELECT a.id, a.layout_id, l.slug, a.kind, a.subject, a.message, a.raised_at, a.acknowledged_at,
         u.name AS acknowledged_by_name, a.ack_comment, a.cleared_at
    FROM alarms a JOIN layouts l ON l.id = a.layout_id LEFT JOIN users u ON u.id = a.acknowledged_by`;

export function toAlarmDto(row: AlarmRow): AlarmDto {
  return {
    id: row.id,
    kind: row.kind,
    subject: row.subject,
    message: row.message,
    raisedAt: new Date(row.raised_at).toISOString(),
    acknowledgedAt: row.acknowledged_at ? new Date(row.acknowledged_at).toISOString() : null,
    acknowledgedBy: row.acknowledged_by_name,
    comment: row.ack_comment,
    clearedAt: row.cleared_at ? new Date(row.cleared_at).toISOString() : null,
  };
}

async function readAlarm(deps: AppDeps, id: number): Promise<AlarmRow | null> {
  const rows = await deps.db.sequelize.query<AlarmRow>(`${SELECT_ALARM} WHERE a.id = :id`, { replacements: { id }, type: QueryTypes.SELECT });
  return rows[0] ?? null;
}

function announce(deps: AppDeps, row: AlarmRow): AlarmDto {
  const dto = toAlarmDto(row);
  deps.bus.emit("alarm.changed", { ...dto, slug: row.slug, layoutId: row.layout_id });
  return dto;
}

/** Raises an alarm unless the same one is open already; returns it and whether it is new. */
export async function raiseAlarm(deps: AppDeps, input: RaiseAlarmInput): Promise<{ alarm: AlarmDto; created: boolean }> {
  const rows = await deps.db.sequelize.query<{ id: number; created: boolean }>(
    `WITH existing AS (
       SELECT id FROM alarms
        WHERE layout_id = :layoutId AND kind = :kind AND subject IS NOT DISTINCT FROM :subject
          AND message = :message AND cleared_at IS NULL
        LIMIT 1
     ), inserted AS (
       INSERT INTO alarms (layout_id, session_id, kind, subject, message, event_id)
       SELECT :layoutId, :sessionId, :kind, :subject, :message, :eventId
        WHERE NOT EXISTS (SELECT 1 FROM existing)
       RETURNING id
     )
     SELECT id, true AS created FROM inserted UNION ALL SELECT id, false FROM existing`,
    {
      replacements: {
        layoutId: input.layoutId,
        sessionId: input.sessionId ?? null,
        kind: input.kind,
        subject: input.subject,
        message: input.message,
        eventId: input.eventId ?? null,
      },
      type: QueryTypes.SELECT,
    },
  );
  const row = await readAlarm(deps, rows[0].id);
  if (!row) throw new Error("alarm vanished while being raised");
  const created = rows[0].created;
  return { alarm: created ? announce(deps, row) : toAlarmDto(row), created };
}

/** Records who acknowledged an alarm and why; acknowledging it again changes nothing. */
export async function acknowledgeAlarm(deps: AppDeps, id: number, userId: number, comment: string | null): Promise<AlarmDto> {
  const existing = await readAlarm(deps, id);
  if (!existing) throw notFound(`alarm ${id}`);
  // Two people acknowledging at once both succeed; the first one is recorded.
  if (existing.acknowledged_at) return toAlarmDto(existing);
  await deps.db.sequelize.query(
    `UPDATE alarms SET acknowledged_at = now(), acknowledged_by = :userId, ack_comment = :comment WHERE id = :id`,
    { replacements: { id, userId, comment } },
  );
  await deps.db.models.AuditEntry.create({
    layoutId: existing.layout_id,
    userId,
    action: "acknowledge-alarm",
    target: `alarm ${id} (${existing.kind}${existing.subject ? ` ${existing.subject}` : ""})`,
    reason: comment,
    before: { acknowledgedAt: null },
    after: { acknowledged: true },
  });
  return announce(deps, (await readAlarm(deps, id))!);
}

/** Clears open alarms of a kind about a subject (e.g. a node back online); returns how many. */
export async function clearAlarms(deps: AppDeps, layoutId: number, kind: AlarmKind, subject: string | null): Promise<number> {
  const rows = await deps.db.sequelize.query<{ id: number }>(
    `UPDATE alarms SET cleared_at = now()
      WHERE layout_id = :layoutId AND kind = :kind AND subject IS NOT DISTINCT FROM :subject AND cleared_at IS NULL
      RETURNING id`,
    { replacements: { layoutId, kind, subject }, type: QueryTypes.SELECT },
  );
  for (const { id } of rows) announce(deps, (await readAlarm(deps, id))!);
  return rows.length;
}

export async function clearAlarm(deps: AppDeps, id: number): Promise<AlarmDto> {
  const existing = await readAlarm(deps, id);
  if (!existing) throw notFound(`alarm ${id}`);
  if (!existing.cleared_at) await deps.db.sequelize.query(`UPDATE alarms SET cleared_at = now() WHERE id = :id`, { replacements: { id } });
  return announce(deps, (await readAlarm(deps, id))!);
}

/**
 * A layout's alarms, newest first. `open` = not cleared, or cleared but never acknowledged
 * (someone still has to look at it).
 */
export async function listAlarms(deps: AppDeps, layoutId: number, state: "open" | "all" = "open", limit = 500): Promise<AlarmDto[]> {
  const where = state === "open" ? "AND (a.cleared_at IS NULL OR a.acknowledged_at IS NULL)" : "";
  const rows = await deps.db.sequelize.query<AlarmRow>(`${SELECT_ALARM} WHERE a.layout_id = :layoutId ${where} ORDER BY a.raised_at DESC, a.id DESC LIMIT :limit`, {
    replacements: { layoutId, limit },
    type: QueryTypes.SELECT,
  });
  return rows.map(toAlarmDto);
}

/** The live pipeline's way to alarms (server/runtime/ports.ts): it imports nothing from features/. */
export function alarmPort(deps: AppDeps): AlarmPort {
  return {
    async raise(alarm) {
      await raiseAlarm(deps, alarm);
    },
    async clear(layoutId, kind, subject) {
      await clearAlarms(deps, layoutId, kind, subject);
    },
    listOpen: (layoutId) => listAlarms(deps, layoutId, "open"),
  };
}
