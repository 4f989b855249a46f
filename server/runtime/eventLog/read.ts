/**
 * Reading the event log: the one place that knows how accepted engine inputs, snapshots,
 * open sessions, node status and each boot's position are read back. Recovery (the live
 * runner) and the sessions feature (replay inputs) both use it, through `Query`, so the
 * same SQL serves a pg pool and a Sequelize instance.
 */
import type pg from "pg";
import { QueryTypes, type Sequelize } from "sequelize";
import type { EngineInput, EngineState } from "@shared/rulebook/engine";

/** `$1`-style parameters; rows as objects. */
export type Query = <T extends object>(sql: string, params?: unknown[]) => Promise<T[]>;

export const poolQuery =
  (pool: pg.Pool | pg.PoolClient): Query =>
  async <T extends object>(sql: string, params: unknown[] = []) =>
    (await pool.query(sql, params)).rows as T[];

export const sequelizeQuery =
  (sequelize: Sequelize): Query =>
  <T extends object>(sql: string, params: unknown[] = []) =>
    sequelize.query<T>(sql, { bind: params, type: QueryTypes.SELECT });

/** Accepted engine inputs are read in pages of this many. */
export const INPUT_PAGE = 5_000;
/** Above every event id: "no upper bound". */
export const NO_ID_LIMIT = "9223372036854775807";

/** Which events: one layout's live log, or one session's (imported ones included). */
export type InputScope = { layoutId: number; beforeId?: string } | { sessionId: number };

/**
 * Accepted pulses, ticks and commands in the order the runner applied them (event id order),
 * as it gave them to the engine: a pulse at its receipt time; points reports, ticks and
 * commands as the engine input stored with them.
 */
export async function* acceptedInputs(query: Query, scope: InputScope, after = "0"): AsyncGenerator<EngineInput> {
  for await (const row of acceptedInputRows(query, scope, after)) yield row.input;
}

/** {@link acceptedInputs} with the id of each input's event (the replay links steps to events). */
export async function* acceptedInputRows(query: Query, scope: InputScope, after = "0"): AsyncGenerator<{ eventId: string; input: EngineInput }> {
  const where =
    "sessionId" in scope ? `e.session_id = $1` : `e.layout_id = $1 AND NOT e.imported AND e.id < $3::bigint`;
  const params: unknown[] = "sessionId" in scope ? [scope.sessionId] : [scope.layoutId, null, scope.beforeId ?? NO_ID_LIMIT];
  for (;;) {
    params[1] = after;
    const rows = await query<{ id: string; kind: string; detector: string | null; received_at: Date; input: EngineInput | null }>(
      // `e.id`, not `id`: ORDER BY a bare name would sort the text column ("10" before "9").
      `SELECT e.id::text AS id, e.kind, e.detector, e.received_at, e.input FROM events e
        WHERE ${where} AND e.id > $2::bigint AND e.status = 'accepted' AND e.kind IN ('pulse','points','tick','command')
        ORDER BY e.id LIMIT ${INPUT_PAGE}`,
      params,
    );
    for (const row of rows) {
      const input: EngineInput | null =
        row.kind === "pulse" ? { type: "pulse", detector: row.detector!, at: new Date(row.received_at).getTime() } : row.input;
      if (input) yield { eventId: row.id, input };
    }
    if (rows.length < INPUT_PAGE) return;
    after = rows[rows.length - 1].id;
  }
}

export interface SnapshotRow<S = { engine: EngineState; since?: Record<string, string> }> {
  rulebook_version: number;
  last_event_id: string;
  state: S;
}

/** The newest snapshot of a layout (taken before event `beforeId`, when given). */
export async function latestSnapshot(query: Query, layoutId: number, beforeId?: string): Promise<SnapshotRow | null> {
  const rows = await query<SnapshotRow>(
    beforeId === undefined
      ? `SELECT rulebook_version, last_event_id::text, state FROM snapshots WHERE layout_id = $1 ORDER BY id DESC LIMIT 1`
      : `SELECT rulebook_version, last_event_id::text, state FROM snapshots
          WHERE layout_id = $1 AND last_event_id < $2::bigint ORDER BY last_event_id DESC, id DESC LIMIT 1`,
    beforeId === undefined ? [layoutId] : [layoutId, beforeId],
  );
  return rows[0] ?? null;
}

/** The layout's open session, with its last pulse or command. */
export async function openSession(query: Query, layoutId: number) {
  const rows = await query<{ id: number; opened_at: Date; rulebook_version: number | null; last: Date | null }>(
    `SELECT s.id, s.opened_at, s.rulebook_version,
            (SELECT max(received_at) FROM events e WHERE e.session_id = s.id AND e.status = 'accepted' AND e.kind IN ('pulse','points','command')) AS last
       FROM sessions s WHERE s.layout_id = $1 AND s.closed_at IS NULL AND s.imported_from IS NULL ORDER BY s.id DESC LIMIT 1`,
    [layoutId],
  );
  return rows[0] ?? null;
}

/** Each node's latest accepted status message. */
export async function lastNodeStatus(query: Query, layoutId: number) {
  return query<{ node_id: string; received_at: Date; input: { online: boolean; boot?: string; fw?: string } | null }>(
    `SELECT DISTINCT ON (node_id) node_id, received_at, input FROM events
      WHERE layout_id = $1 AND kind = 'status' AND status = 'accepted' AND NOT imported ORDER BY node_id, id DESC`,
    [layoutId],
  );
}

export interface BootPosition {
  node: string;
  boot: string;
  /** The highest seq stored for this boot. */
  maxSeq: number;
  /** Seqs below maxSeq never stored (declared missed), as inclusive ranges. */
  gaps: [number, number][];
  /** Not the node's newest boot. */
  ended: boolean;
}

/**
 * Where each node's last few boots stand, rebuilt from the log: every seq below the highest
 * stored one was either stored or declared missed, so the gaps are the missed ones. Late
 * messages do not fill a gap (they were not applied).
 */
export async function bootPositions(query: Query, layoutId: number, bootsPerNode: number): Promise<BootPosition[]> {
  const boots = await query<{ node_id: string; boot: string; max_seq: string; rn: string }>(
    `SELECT node_id, boot, max_seq::text, rn::text FROM (
       SELECT node_id, boot, max(seq) AS max_seq, row_number() OVER (PARTITION BY node_id ORDER BY max(id) DESC) AS rn
         FROM events WHERE layout_id = $1 AND seq IS NOT NULL AND boot IS NOT NULL AND node_id IS NOT NULL
          AND NOT imported AND status <> 'late' AND kind IN ('pulse','points')
        GROUP BY node_id, boot) b
      WHERE rn <= $2 ORDER BY node_id, rn DESC`,
    [layoutId, bootsPerNode],
  );
  if (boots.length === 0) return [];
  const gaps = await query<{ node_id: string; boot: string; from: string; to: string }>(
    `SELECT node_id, boot, (prev + 1)::text AS from, (seq - 1)::text AS to FROM (
       SELECT node_id, boot, seq, lag(seq, 1, 0::bigint) OVER (PARTITION BY node_id, boot ORDER BY seq) AS prev
         FROM (SELECT DISTINCT node_id, boot, seq FROM events
                WHERE layout_id = $1 AND seq IS NOT NULL AND NOT imported AND status <> 'late' AND kind IN ('pulse','points')
                  AND (node_id, boot) IN (SELECT * FROM unnest($2::text[], $3::text[]))) s) g
      WHERE seq > prev + 1 ORDER BY node_id, boot, seq`,
    [layoutId, boots.map((b) => b.node_id), boots.map((b) => b.boot)],
  );
  return boots.map((b) => ({
    node: b.node_id,
    boot: b.boot,
    maxSeq: Number(b.max_seq),
    gaps: gaps.filter((g) => g.node_id === b.node_id && g.boot === b.boot).map((g) => [Number(g.from), Number(g.to)] as [number, number]),
    ended: b.rn !== "1",
  }));
}

/** The layout's newest live event id ("0" when none): where the next commit's ids start. */
export async function lastEventId(query: Query, layoutId: number): Promise<string> {
  const rows = await query<{ id: string | null }>(`SELECT max(id)::text AS id FROM events WHERE layout_id = $1 AND NOT imported`, [layoutId]);
  return rows[0]?.id ?? "0";
}

/** Live event ids after `afterId`, in order: tells whether a commit whose reply was lost went through. */
export async function eventIdsAfter(
  query: Query,
  layoutId: number,
  afterId: string,
): Promise<{ id: string; session_id: number | null; kind: string; node_id: string | null; seq: string | null }[]> {
  return query<{ id: string; session_id: number | null; kind: string; node_id: string | null; seq: string | null }>(
    `SELECT id::text, session_id, kind, node_id, seq::text FROM events WHERE layout_id = $1 AND id > $2::bigint AND NOT imported ORDER BY id`,
    [layoutId, afterId],
  );
}
