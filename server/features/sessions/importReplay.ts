/**
 * The changes of an imported session. An uploaded log brings its inputs only (the file's own
 * changes could say anything); here they are replayed through the same pure engine as the
 * replay player — from the rulebook's initial values at the session's start, on the session's
 * rulebook version — and the changes stored against their events, so the event log, its
 * exports and the replay tell one story. Done in the import's transaction; a session imported
 * before this existed is replayed once, the first time its log is read.
 */
import { QueryTypes, type Transaction } from "sequelize";
import { initialState, step, type Change, type EngineInput, type EngineState } from "@shared/rulebook/engine";
import type { Rulebook } from "@shared/rulebook/schema";
import type { AppDeps } from "../../deps";

/** Engine steps between yields: the live runner shares this process (as the import's parsing). */
const STEPS_PER_TURN = 2_000;
/** Changes written per INSERT. */
const INSERT_CHUNK_CHANGES = 5_000;
const nextTurn = () => new Promise<void>((resolve) => setImmediate(resolve));

export interface ReplayInput {
  eventId: string;
  input: EngineInput;
}

/**
 * Steps the inputs through the engine; the changes each made, by event id. An engine failure
 * ends the replay there (the live runner would have stopped applying too): the events before
 * it keep their changes and the reason is returned.
 */
export async function replayChanges(rulebook: Rulebook, start: EngineState, inputs: ReplayInput[]): Promise<{ changes: Map<string, Change[]>; failure: string | null }> {
  const changes = new Map<string, Change[]>();
  let state = start;
  for (let i = 0; i < inputs.length; i++) {
    if (i % STEPS_PER_TURN === STEPS_PER_TURN - 1) await nextTurn();
    try {
      const result = step(rulebook, state, inputs[i].input);
      state = result.state;
      if (result.changes.length) changes.set(inputs[i].eventId, result.changes);
    } catch (err) {
      return { changes, failure: `the rulebook engine failed at event ${inputs[i].eventId}: ${(err as Error).message}` };
    }
  }
  return { changes, failure: null };
}

const json = (value: unknown) => (value === undefined ? null : JSON.stringify(value));

async function insertChanges(deps: AppDeps, transaction: Transaction, changes: Map<string, Change[]>): Promise<number> {
  const rows = [...changes].flatMap(([eventId, list]) => list.map((change) => ({ eventId, change })));
  for (let from = 0; from < rows.length; from += INSERT_CHUNK_CHANGES) {
    const chunk = rows.slice(from, from + INSERT_CHUNK_CHANGES);
    // ORDER BY ord: change ids keep the engine's order within an event, as the log lists them.
    await deps.db.sequelize.query(
      `INSERT INTO changes (event_id, kind, name, from_value, to_value, rule, command, detail)
       SELECT event_id, kind, name, from_value, to_value, rule, command, detail
         FROM unnest($1::bigint[], $2::text[], $3::text[], $4::jsonb[], $5::jsonb[], $6::text[], $7::text[], $8::text[])
              WITH ORDINALITY AS t(event_id, kind, name, from_value, to_value, rule, command, detail, ord)
        ORDER BY ord`,
      {
        bind: [
          chunk.map((r) => r.eventId),
          chunk.map((r) => r.change.kind),
          chunk.map((r) => r.change.name),
          chunk.map((r) => json(r.change.from)),
          chunk.map((r) => json(r.change.to)),
          chunk.map((r) => r.change.rule ?? null),
          chunk.map((r) => r.change.command ?? null),
          chunk.map((r) => r.change.detail ?? null),
        ],
        transaction,
      },
    );
  }
  return rows.length;
}

/**
 * Replays one imported session inside `transaction` (its events may not be committed yet) and
 * stores the changes; does nothing for a live session or one already replayed. The session
 * row is locked, so two readers of an old import cannot both replay it.
 */
export async function storeImportedChanges(deps: AppDeps, sessionId: number, transaction: Transaction): Promise<void> {
  const select = <T extends object>(sql: string, replacements: Record<string, unknown>) =>
    deps.db.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT, transaction });
  const [session] = await select<{ opened_at: Date; rulebook: Rulebook | null }>(
    `SELECT s.opened_at, r.rulebook FROM sessions s
       LEFT JOIN rulebook_versions r ON r.layout_id = s.layout_id AND r.version = s.rulebook_version
      WHERE s.id = :sessionId AND s.imported_from IS NOT NULL AND s.changes_replayed_at IS NULL
        FOR UPDATE OF s`,
    { sessionId },
  );
  if (!session) return;
  if (session.rulebook) {
    // The same inputs, in the same order, as the replay player's (`sessionInputs`).
    const rows = await select<{ id: string; kind: string; detector: string | null; received_at: Date; input: EngineInput | null }>(
      `SELECT e.id::text AS id, e.kind, e.detector, e.received_at, e.input FROM events e
        WHERE e.session_id = :sessionId AND e.status = 'accepted' AND e.kind IN ('pulse','tick','command') ORDER BY e.id`,
      { sessionId },
    );
    const inputs: ReplayInput[] = [];
    for (const row of rows) {
      const input = row.kind === "pulse" ? { type: "pulse" as const, detector: row.detector!, at: new Date(row.received_at).getTime() } : row.input;
      if (input) inputs.push({ eventId: row.id, input });
    }
    const replayed = await replayChanges(session.rulebook, initialState(session.rulebook, new Date(session.opened_at).getTime()), inputs);
    if (replayed.failure) deps.logger.warn({ sessionId, reason: replayed.failure }, "replay of an imported session stopped");
    await insertChanges(deps, transaction, replayed.changes);
  }
  await deps.db.sequelize.query(`UPDATE sessions SET changes_replayed_at = now() WHERE id = :sessionId`, { replacements: { sessionId }, transaction });
}

/** Before an imported session's log is read: replays it if it was imported before replays were stored. */
export async function ensureImportReplayed(deps: AppDeps, sessionId: number): Promise<void> {
  const [pending] = await deps.db.sequelize.query<{ id: number }>(
    `SELECT id FROM sessions WHERE id = :sessionId AND imported_from IS NOT NULL AND changes_replayed_at IS NULL`,
    { replacements: { sessionId }, type: QueryTypes.SELECT },
  );
  if (pending) await deps.db.sequelize.transaction((transaction) => storeImportedChanges(deps, sessionId, transaction));
}
