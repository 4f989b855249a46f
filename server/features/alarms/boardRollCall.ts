/**
 * The board roll call: once a live session has been open for the layout's
 * `boardConnectWithinMs`, every registered board that has not been online since the session
 * opened raises a `node-offline` alarm ("has not connected"). Boards that went offline later
 * are the watchers' business. Checked every `everyMs`; the decision is {@link missingBoards}.
 */
import { QueryTypes } from "sequelize";
import { ALARM_KIND } from "@shared/contract/alarmKinds";
import type { AppDeps } from "../../deps";
import { raiseAlarm } from "./service";
import { alarmSettingsOf } from "./settings";

export const ROLL_CALL_EVERY_MS = 5_000;

export interface RollCallSession {
  sessionId: number;
  layoutId: number;
  openedAt: number;
  /** Boards of the layout and whether each has been online at any moment since the session opened. */
  boards: { id: string; name: string; seenSinceOpen: boolean }[];
}

/** The boards that should have connected by `now` and have not (pure). */
export function missingBoards(session: RollCallSession, connectWithinMs: number, now: number): { id: string; name: string }[] {
  if (now - session.openedAt < connectWithinMs) return [];
  return session.boards.filter((b) => !b.seenSinceOpen);
}

const clock = (ms: number) => new Date(ms).toISOString().slice(11, 19);
const minutes = (ms: number) => (ms % 60_000 === 0 ? `${ms / 60_000} min` : `${Math.round(ms / 1000)} s`);

async function openSessions(deps: AppDeps): Promise<RollCallSession[]> {
  const rows = await deps.db.sequelize.query<{ session_id: number; layout_id: number; opened_at: Date; node_id: string | null; name: string | null; seen: boolean | null }>(
    // A board is seen if it was online when the session opened (its last status before said so)
    // or said online since.
    `SELECT s.id AS session_id, s.layout_id, s.opened_at, n.node_id, n.name,
            EXISTS (SELECT 1 FROM events e WHERE e.layout_id = s.layout_id AND e.node_id = n.node_id AND e.kind = 'status'
                      AND e.status = 'accepted' AND NOT e.imported AND e.received_at >= s.opened_at AND (e.input->>'online')::boolean)
            OR coalesce((SELECT (e.input->>'online')::boolean FROM events e WHERE e.layout_id = s.layout_id AND e.node_id = n.node_id
                          AND e.kind = 'status' AND e.status = 'accepted' AND NOT e.imported AND e.received_at < s.opened_at
                        ORDER BY e.id DESC LIMIT 1), false) AS seen
       FROM sessions s LEFT JOIN nodes n ON n.layout_id = s.layout_id
      WHERE s.closed_at IS NULL AND s.imported_from IS NULL`,
    { type: QueryTypes.SELECT },
  );
  const sessions = new Map<number, RollCallSession>();
  for (const r of rows) {
    const s = sessions.get(r.session_id) ?? { sessionId: r.session_id, layoutId: r.layout_id, openedAt: new Date(r.opened_at).getTime(), boards: [] };
    if (r.node_id) s.boards.push({ id: r.node_id, name: r.name ?? r.node_id, seenSinceOpen: r.seen === true });
    sessions.set(r.session_id, s);
  }
  return [...sessions.values()];
}

/** One roll call over every open live session. */
export async function rollCall(deps: AppDeps, now = Date.now()): Promise<number> {
  let raised = 0;
  for (const session of await openSessions(deps)) {
    const { boardConnectWithinMs } = await alarmSettingsOf(deps, session.layoutId);
    for (const board of missingBoards(session, boardConnectWithinMs, now)) {
      const { created } = await raiseAlarm(deps, {
        layoutId: session.layoutId,
        sessionId: session.sessionId,
        kind: ALARM_KIND.nodeOffline,
        subject: board.id,
        message: `Board ${board.name} (${board.id}) has not connected within ${minutes(boardConnectWithinMs)} of the session's start at ${clock(session.openedAt)} UTC`,
      });
      if (created) raised++;
    }
  }
  return raised;
}

export function startBoardRollCall(deps: AppDeps, options: { everyMs?: number } = {}): { stop(): void } {
  let running = false;
  const timer = setInterval(() => {
    if (running) return;
    running = true;
    rollCall(deps)
      .catch((err: unknown) => deps.logger.warn({ err }, "board roll call failed"))
      .finally(() => (running = false));
  }, options.everyMs ?? ROLL_CALL_EVERY_MS);
  timer.unref();
  return { stop: () => clearInterval(timer) };
}
