/**
 * The group commit's one statement with a snapshot in it, and the committer's last resort (a
 * batch refused even with safe text, stored piece by piece) for a batch that opens a session
 * and takes a snapshot: every piece lands, the snapshot under the session's new id.
 */
import { randomBytes } from "node:crypto";
import pg from "pg";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { openDatabase, type Database } from "../../server/db/database";
import { createLogger } from "../../server/logger";
import { Committer } from "../../server/runtime/committer";
import { commitBatch, emptyBatch, type Batch, type PendingEvent } from "../../server/runtime/eventLog";
import { createTestDatabase } from "../support/testApp";

let db: Database;
let pool: pg.Pool;
let layoutId: number;

const pulse = (seq: number, session: PendingEvent["session"]): PendingEvent => ({
  kind: "pulse", status: "accepted", reason: null, node: "n1", boot: "b1", seq, detector: "D1", receivedAt: Date.now(), boardT: null,
  topic: "blocklight/v1/gc/node/n1/pulse", rawPayload: `{"detector":"D1","seq":${seq},"boot":"b1"}`, userId: null, input: null, session,
  changes: [{ kind: "latch", name: "lit", from: false, to: true } as never],
});

beforeAll(async () => {
  const url = await createTestDatabase();
  db = await openDatabase(url);
  pool = new pg.Pool({ connectionString: url, max: 2 });
  const { rows } = await pool.query<{ id: number }>(`INSERT INTO layouts (slug, name, scale_name, scale_ratio) VALUES ('gc', 'Group commit', 'G', 22.5) RETURNING id`);
  layoutId = rows[0].id;
});

afterAll(async () => {
  await pool?.end();
  await db?.close();
});

describe("group commit", () => {
  it("stores a snapshot in the batch's one statement, after the batch's last event (or the layout's newest)", async () => {
    const session = (await pool.query<{ id: number }>(`INSERT INTO sessions (layout_id) VALUES ($1) RETURNING id`, [layoutId])).rows[0].id;
    const batch: Batch = { ...emptyBatch(layoutId), events: [pulse(1, { id: session }), pulse(2, { id: session })], aspectRev: 3 };
    batch.snapshot = { rulebookVersion: 1, session: { id: session }, state: { engine: { latches: { lit: true } } } };
    const { eventIds } = await commitBatch(pool, batch);
    expect(eventIds).toHaveLength(2);
    const alone: Batch = { ...emptyBatch(layoutId), snapshot: { rulebookVersion: 1, session: null, state: { engine: {} } } };
    expect((await commitBatch(pool, alone)).eventIds).toEqual([]);
    const snaps = await pool.query<{ last_event_id: string; session_id: number | null; state: unknown }>(
      `SELECT last_event_id::text, session_id, state FROM snapshots WHERE layout_id = $1 ORDER BY id`,
      [layoutId],
    );
    expect(snaps.rows).toEqual([
      { last_event_id: eventIds[1], session_id: session, state: { engine: { latches: { lit: true } } } },
      { last_event_id: eventIds[1], session_id: null, state: { engine: {} } },
    ]);
    const rev = await pool.query<{ aspect_rev: string }>(`SELECT aspect_rev::text FROM layouts WHERE id = $1`, [layoutId]);
    expect(rev.rows[0].aspect_rev).toBe("3");
  });

  it("a batch refused even with safe text is stored piece by piece, its snapshot under the session it opened", async () => {
    const committer = new Committer(pool, layoutId, createLogger("silent"), Date.now);
    await committer.start();
    const batch: Batch = {
      ...emptyBatch(layoutId),
      sessionOpens: [{ temp: 1, openedAt: Date.now(), rulebookVersion: 1, openedBy: null }],
      // a boot too long for the btree index (54000, program limit) whatever its text; the
      // event stored alone as rejected has no boot
      events: [pulse(10, { temp: 1 }), { ...pulse(11, { temp: 1 }), boot: randomBytes(6_000).toString("base64") }],
      aspectRev: 4,
      snapshot: { rulebookVersion: 1, session: { temp: 1 }, state: { engine: { latches: { lit: false } } } },
    };
    const result = await Promise.race([
      committer.commit(batch, () => undefined),
      new Promise<never>((_, reject) => setTimeout(() => reject(new Error("the commit did not finish")), 5_000)),
    ]);
    committer.stop();
    expect(result.eventIds).toHaveLength(2);
    const sessionId = result.sessionIds.get(1);
    expect(sessionId).toBeTypeOf("number");
    const events = await pool.query<{ status: string; session_id: number | null }>(
      `SELECT status, session_id FROM events WHERE id = ANY($1::bigint[]) ORDER BY id`,
      [result.eventIds],
    );
    expect(events.rows).toEqual([
      { status: "accepted", session_id: sessionId },
      { status: "rejected", session_id: sessionId },
    ]);
    const snap = await pool.query<{ last_event_id: string; session_id: number | null }>(
      `SELECT last_event_id::text, session_id FROM snapshots WHERE layout_id = $1 ORDER BY id DESC LIMIT 1`,
      [layoutId],
    );
    expect(snap.rows[0]).toEqual({ last_event_id: result.eventIds[1], session_id: sessionId });
  });
});
