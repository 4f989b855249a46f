/**
 * When each points was last thrown, read back from the event log (the `throw` changes stored
 * with their events), at the time the engine gave that input: recovery rebuilds the points
 * detection checks from it (server/runtime/pointsRecovery.ts).
 */
import type { Query } from "./read";

export async function lastThrowTimes(query: Query, layoutId: number, points: string[]): Promise<Map<string, number>> {
  if (points.length === 0) return new Map();
  // Per points, the newest event of the layout backwards (events_layout_order) that threw it:
  // a recent throw is found after a few rows however long the log is.
  const rows = await query<{ name: string; at: string | null }>(
    `SELECT p.name,
            (SELECT (CASE WHEN e.kind = 'pulse' THEN extract(epoch FROM e.received_at) * 1000 ELSE (e.input->>'at')::float8 END)::text
               FROM events e JOIN changes c ON c.event_id = e.id
              WHERE e.layout_id = $1 AND NOT e.imported AND e.status = 'accepted' AND c.kind = 'throw' AND c.name = p.name
              ORDER BY e.id DESC LIMIT 1) AS at
       FROM unnest($2::text[]) AS p(name)`,
    [layoutId, points],
  );
  return new Map(rows.filter((r) => r.at !== null).map((r) => [r.name, Math.round(Number(r.at))]));
}
