/**
 * When each points was last thrown, read back from the event log (the `throw` changes stored
 * with their events), at the time the engine gave that input: recovery rebuilds the points
 * detection checks from it (server/runtime/pointsRecovery.ts).
 */
import type { Query } from "./read";

export async function lastThrowTimes(query: Query, layoutId: number, points: string[]): Promise<Map<string, number>> {
  if (points.length === 0) return new Map();
  const rows = await query<{ name: string; at: string }>(
    `SELECT DISTINCT ON (c.name) c.name,
            (CASE WHEN e.kind = 'pulse' THEN extract(epoch FROM e.received_at) * 1000 ELSE (e.input->>'at')::float8 END)::text AS at
       FROM changes c JOIN events e ON e.id = c.event_id
      WHERE e.layout_id = $1 AND NOT e.imported AND e.status = 'accepted' AND c.kind = 'throw' AND c.name = ANY($2::text[])
      ORDER BY c.name, e.id DESC, c.id DESC`,
    [layoutId, points],
  );
  return new Map(rows.map((r) => [r.name, Math.round(Number(r.at))]));
}
