/**
 * Alarms: raised by the live pipeline and the watchers, acknowledged by a signaller,
 * maintainer or admin with a comment, cleared when the condition is gone. An alarm is open
 * at most once per layout, kind and subject (a unique index, migration 009): raising it again
 * while it is open adds to its `occurrences`, moves `last_seen_at` and keeps the latest message.
 */
import { QueryTypes } from "sequelize";
import type { AlarmDto, AlarmKind } from "@shared/contract/live";
import type { AppDeps } from "../../deps";
import type { AlarmPort, RaiseAlarm } from "../../runtime/ports";
import { notFound } from "../../http/errors";
import { refuseIfArchived } from "../../data/layouts";

/** The port's alarm, where features may leave the event and session out (or give the event id as a number). */
export type RaiseAlarmInput = Omit<RaiseAlarm, "eventId" | "sessionId"> & {
  eventId?: string | number | null;
  sessionId?: number | null;
};

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
  occurrences: number;
  last_seen_at: Date;
  session_id: number | null;
  event_id: string | null;
}

const SELECT_ALARM = `
  SELECT a.id, a.layout_id, l.slug, a.kind, a.subject, a.message, a.raised_at, a.acknowledged_at,
         u.name AS acknowledged_by_name, a.ack_comment, a.cleared_at,
         a.occurrences, a.last_seen_at, a.session_id, a.event_id::text AS event_id
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
    occurrences: row.occurrences,
    lastSeenAt: new Date(row.last_seen_at).toISOString(),
    sessionId: row.session_id,
    eventId: row.event_id,
  };
}

async function readAlarm(deps: AppDeps, id: number): Promise<AlarmRow | null> {
  const rows = await deps.db.sequelize.query<AlarmRow>(`${SELECT_ALARM} WHERE a.id = :id`, { replacements: { id }, type: QueryTypes.SELECT });
  return rows[0] ?? null;
}

function announce(deps: AppDeps, row: AlarmRow, created = false): AlarmDto {
  const dto = toAlarmDto(row);
  deps.bus.emit("alarm.changed", { ...dto, slug: row.slug, layoutId: row.layout_id, created });
  return dto;
}

/** Raises an alarm, or counts one more occurrence of the same open one; returns it and whether it is new. */
export async function raiseAlarm(deps: AppDeps, input: RaiseAlarmInput): Promise<{ alarm: AlarmDto; created: boolean }> {
  const at = new Date();
  const { raised } = await writeAlarms(deps, [{ op: "raise", ...input, count: 1, firstAt: at, lastAt: at }]);
  return raised[0];
}

/** One write of the alarm writer: a raise covering `count` occurrences, or a clear. */
export type AlarmWrite =
  | ({ op: "raise"; count: number; firstAt: Date; lastAt: Date } & RaiseAlarmInput)
  | { op: "clear"; layoutId: number; kind: AlarmKind; subject: string | null };

const writeKey = (w: { layoutId: number; kind: AlarmKind; subject: string | null }) => `${w.layoutId}|${w.kind}|${w.subject ?? ""}`;

/**
 * Writes many raises and clears in a few statements: one upsert and one update per wave,
 * where a wave holds at most one write per alarm (a statement may touch a row only once),
 * in the order given. Announces every alarm it changed; returns the raised ones in order
 * and how many open alarms the clears closed.
 */
export async function writeAlarms(deps: AppDeps, writes: AlarmWrite[]): Promise<{ raised: { alarm: AlarmDto; created: boolean }[]; cleared: number }> {
  const waves: AlarmWrite[][] = [];
  let wave: AlarmWrite[] = [];
  let keys = new Set<string>();
  for (const w of writes) {
    const key = writeKey(w);
    if (keys.has(key)) {
      waves.push(wave);
      wave = [];
      keys = new Set();
    }
    wave.push(w);
    keys.add(key);
  }
  if (wave.length) waves.push(wave);

  const raisedIds: { id: number; created: boolean }[] = [];
  const changed = new Set<number>();
  let cleared = 0;
  const sql = deps.db.sequelize;
  for (const items of waves) {
    const raises = items.filter((w): w is Extract<AlarmWrite, { op: "raise" }> => w.op === "raise");
    const clears = items.filter((w): w is Extract<AlarmWrite, { op: "clear" }> => w.op === "clear");
    if (raises.length) {
      // Raw SQL on a measured hot path (a chattering detector at full rate): one statement per wave.
      const rows = await sql.query<{ id: number; created: boolean }>(
        `INSERT INTO alarms (layout_id, session_id, kind, subject, message, event_id, occurrences, raised_at, last_seen_at)
         SELECT * FROM unnest($1::int[], $2::int[], $3::text[], $4::text[], $5::text[], $6::bigint[], $7::int[], $8::timestamptz[], $9::timestamptz[])
         ON CONFLICT (layout_id, kind, (coalesce(subject, ''))) WHERE cleared_at IS NULL
         DO UPDATE SET occurrences = alarms.occurrences + EXCLUDED.occurrences,
                       last_seen_at = greatest(alarms.last_seen_at, EXCLUDED.last_seen_at),
                       message = EXCLUDED.message
         RETURNING id, (xmax = 0) AS created`,
        {
          bind: [
            raises.map((r) => r.layoutId),
            raises.map((r) => r.sessionId ?? null),
            raises.map((r) => r.kind),
            raises.map((r) => r.subject),
            raises.map((r) => r.message),
            raises.map((r) => (r.eventId === undefined || r.eventId === null ? null : String(r.eventId))),
            raises.map((r) => r.count),
            raises.map((r) => r.firstAt.toISOString()),
            raises.map((r) => r.lastAt.toISOString()),
          ],
          type: QueryTypes.SELECT,
        },
      );
      for (const row of rows) {
        raisedIds.push(row);
        changed.add(row.id);
      }
    }
    if (clears.length) {
      const rows = await sql.query<{ id: number }>(
        `UPDATE alarms a SET cleared_at = now()
           FROM unnest($1::int[], $2::text[], $3::text[]) AS c(layout_id, kind, subject)
          WHERE a.layout_id = c.layout_id AND a.kind = c.kind AND coalesce(a.subject, '') = coalesce(c.subject, '') AND a.cleared_at IS NULL
          RETURNING a.id`,
        { bind: [clears.map((c) => c.layoutId), clears.map((c) => c.kind), clears.map((c) => c.subject)], type: QueryTypes.SELECT },
      );
      for (const row of rows) changed.add(row.id);
      cleared += rows.length;
    }
  }
  if (changed.size === 0) return { raised: [], cleared };
  const rows = await sql.query<AlarmRow>(`${SELECT_ALARM} WHERE a.id = ANY($1::int[])`, { bind: [[...changed]], type: QueryTypes.SELECT });
  const createdIds = new Set(raisedIds.filter((r) => r.created).map((r) => r.id));
  const dtos = new Map(rows.map((row) => [row.id, announce(deps, row, createdIds.has(row.id))]));
  return { raised: raisedIds.map(({ id, created }) => ({ alarm: dtos.get(id)!, created })), cleared };
}

/** Records who acknowledged an alarm and why; acknowledging it again changes nothing. */
export async function acknowledgeAlarm(deps: AppDeps, id: number, userId: number, comment: string | null): Promise<AlarmDto> {
  const existing = await readAlarm(deps, id);
  if (!existing) throw notFound(`alarm ${id}`);
  const layout = await deps.db.models.Layout.findByPk(existing.layout_id);
  if (layout) refuseIfArchived(layout);
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

/** Clears the open alarm of a kind about a subject (e.g. a node back online); returns how many. */
export async function clearAlarms(deps: AppDeps, layoutId: number, kind: AlarmKind, subject: string | null): Promise<number> {
  return (await writeAlarms(deps, [{ op: "clear", layoutId, kind, subject }])).cleared;
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
