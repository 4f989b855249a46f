/**
 * Who is connecting to the broker, decided against the database.
 *
 * Node ids are unique per layout only, so a user name alone does not say which board is
 * connecting. We look up every registered node with that id (across layouts) that has a
 * secret and check the password against each stored hash (server/nodeSecret.ts); the one
 * that matches decides the layout. Secrets are 24 random bytes, so two boards never share
 * one. The server's own client is recognised by its configured user name and password
 * (compared in constant time); a user name equal to the server's is never looked up as a node.
 */
import { timingSafeEqual } from "node:crypto";
import type pg from "pg";
import type { BrokerIdentity } from "./acl";
import { checkNodeSecret } from "../server/nodeSecret";
import type { Authenticate } from "./server";

export interface DbAuthOptions {
  pool: pg.Pool;
  serverUsername: string;
  /** A function is asked at every login, e.g. to re-read a secret file another process may have written. */
  serverPassword: string | (() => string);
  /** Told when a legacy hash could not be replaced (the login still succeeds). */
  onRehashError?: (err: unknown) => void;
}

function sameText(a: string, b: string): boolean {
  const x = Buffer.from(a);
  const y = Buffer.from(b);
  return x.length === y.length && timingSafeEqual(x, y);
}

export function databaseAuthenticator(options: DbAuthOptions): Authenticate {
  return async (username, password): Promise<BrokerIdentity | null> => {
    if (!username || !password) return null;
    if (sameText(username, options.serverUsername)) {
      const serverPassword = typeof options.serverPassword === "function" ? options.serverPassword() : options.serverPassword;
      return serverPassword && sameText(password, serverPassword) ? { kind: "server" } : null;
    }
    const { rows } = await options.pool.query<{ layout_id: number; slug: string; node_id: string; secret_hash: string }>(
      `SELECT n.layout_id, l.slug, n.node_id, n.secret_hash
         FROM nodes n JOIN layouts l ON l.id = n.layout_id
        WHERE n.node_id = $1 AND n.secret_hash IS NOT NULL`,
      [username],
    );
    for (const row of rows) {
      const checked = await checkNodeSecret(password, row.secret_hash);
      if (!checked.ok) continue;
      let secretHash = row.secret_hash;
      if (checked.rehash) {
        // Only if nobody re-issued the secret meanwhile.
        const replaced = await options.pool
          .query(`UPDATE nodes SET secret_hash = $1 WHERE layout_id = $2 AND node_id = $3 AND secret_hash = $4`, [checked.rehash, row.layout_id, row.node_id, row.secret_hash])
          .then((r) => r.rowCount === 1)
          .catch((err: unknown) => {
            options.onRehashError?.(err);
            return false;
          });
        if (replaced) secretHash = checked.rehash;
      }
      return { kind: "node", layout: row.slug, node: row.node_id, credential: { layoutId: row.layout_id, secretHash } };
    }
    return null;
  };
}
