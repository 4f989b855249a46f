/**
 * Ends a board's connection when the credentials it connected with end: its secret was
 * re-issued (the remedy for a stolen secret) or its node record removed. The broker checks a
 * secret only at CONNECT, so without this a thief already connected would keep publishing
 * pulses for as long as it stayed connected.
 *
 * PostgreSQL tells us (migration 018 notifies NODE_CREDENTIALS_CHANNEL on commit); on each
 * notice, and after every (re)LISTEN in case notices were missed meanwhile, the connected
 * boards' stored hashes are compared with the database and those that no longer match go.
 */
import type pg from "pg";
import { NODE_CREDENTIALS_CHANNEL } from "../server/nodeSecret";
import type { NodeIdentity, RunningBroker } from "./server";

/** After losing the LISTEN connection, try again this long after. */
const RELISTEN_AFTER_MS = 1_000;

export interface CredentialWatch {
  /** Resolves once a check is finished (tests wait on it). */
  checked(): Promise<void>;
  stop(): Promise<void>;
}

const key = (layoutId: number, node: string) => `${layoutId}/${node}`;

/** The connected boards whose secret hash is not the stored one any more (or whose record is gone). */
async function staleBoards(pool: pg.Pool, boards: NodeIdentity[]): Promise<Set<string>> {
  const withCredential = boards.filter((b) => b.credential);
  if (withCredential.length === 0) return new Set();
  const { rows } = await pool.query<{ layout_id: number; node_id: string; secret_hash: string | null }>(
    `SELECT layout_id, node_id, secret_hash FROM nodes WHERE (layout_id, node_id) IN (SELECT * FROM unnest($1::int[], $2::text[]))`,
    [withCredential.map((b) => b.credential!.layoutId), withCredential.map((b) => b.node)],
  );
  const current = new Map(rows.map((r) => [key(r.layout_id, r.node_id), r.secret_hash]));
  const stale = new Set<string>();
  for (const b of withCredential) {
    const k = key(b.credential!.layoutId, b.node);
    if (current.get(k) !== b.credential!.secretHash) stale.add(k);
  }
  return stale;
}

export function watchNodeCredentials(options: { pool: pg.Pool; broker: RunningBroker; onError?: (err: unknown) => void }): CredentialWatch {
  const { pool, broker } = options;
  let listener: pg.PoolClient | null = null;
  let stopped = false;
  let retry: NodeJS.Timeout | null = null;
  let last: Promise<void> = Promise.resolve();

  // Checks run one after another, so a slow one never undoes a later one's view.
  const check = (only?: { layoutId: number; node: string }) => {
    last = last.then(async () => {
      const boards = broker.connectedNodes().filter((b) => !only || (b.credential?.layoutId === only.layoutId && b.node === only.node));
      const stale = await staleBoards(pool, boards);
      if (stale.size === 0) return;
      broker.disconnectNodes(
        (b) => b.credential !== undefined && stale.has(key(b.credential.layoutId, b.node)),
        "the secret this board connected with was re-issued or its node removed",
      );
    }).catch((err: unknown) => options.onError?.(err));
    return last;
  };

  const listen = async () => {
    retry = null;
    if (stopped) return;
    try {
      const client = await pool.connect();
      client.on("notification", (msg) => {
        if (msg.channel !== NODE_CREDENTIALS_CHANNEL || !msg.payload) return;
        try {
          const { layoutId, node } = JSON.parse(msg.payload) as { layoutId: number; node: string };
          void check({ layoutId, node });
        } catch (err) {
          options.onError?.(err);
        }
      });
      client.on("error", (err) => {
        options.onError?.(err);
        client.release(true);
        if (listener === client) listener = null;
        if (!stopped) retry = setTimeout(() => void listen(), RELISTEN_AFTER_MS);
      });
      await client.query(`LISTEN ${NODE_CREDENTIALS_CHANNEL}`);
      if (stopped) return void client.release(true);
      listener = client;
      await check();
    } catch (err) {
      options.onError?.(err);
      if (!stopped) retry = setTimeout(() => void listen(), RELISTEN_AFTER_MS);
    }
  };
  const started = listen();

  return {
    checked: async () => {
      await started;
      await last;
    },
    async stop() {
      stopped = true;
      if (retry) clearTimeout(retry);
      await started;
      await last;
      listener?.release(true);
      listener = null;
    },
  };
}
