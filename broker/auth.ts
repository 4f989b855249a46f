/**
 * Who is connecting to the broker, decided against the database.
 *
 * Node ids are unique per layout only, so a user name alone does not say which board is
 * connecting. We look up every registered node with that id (across layouts) that has a
 * secret and compare the password with each bcrypt hash; the one that matches decides the
 * layout. Secrets are 24 random bytes, so two boards never share one. The server's own
 * client is recognised by its configured user name and password (compared in constant time).
 */
import { timingSafeEqual } from "node:crypto";
import bcrypt from "bcryptjs";
import type pg from "pg";
import type { Authenticate, BrokerIdentity } from "./server";

export interface DbAuthOptions {
  pool: pg.Pool;
  serverUsername: string;
  /** A function is asked at every login, e.g. to re-read a secret file another process may have written. */
  serverPassword: string | (() => string);
}

function sameText(a: string, b: string): boolean {
  const x = Buffer.from(a);
  const y = Buffer.from(b);
  return x.length === y.length && timingSafeEqual(x, y);
}

export function databaseAuthenticator(options: DbAuthOptions): Authenticate {
  return async (username, password): Promise<BrokerIdentity | null> => {
    if (!username || !password) return null;
    const serverPassword = typeof options.serverPassword === "function" ? options.serverPassword() : options.serverPassword;
    if (serverPassword && sameText(username, options.serverUsername) && sameText(password, serverPassword)) {
      return { kind: "server" };
    }
    const { rows } = await options.pool.query<{ slug: string; node_id: string; secret_hash: string }>(
      `SELECT l.slug, n.node_id, n.secret_hash
         FROM nodes n JOIN layouts l ON l.id = n.layout_id
        WHERE n.node_id = $1 AND n.secret_hash IS NOT NULL`,
      [username],
    );
    for (const row of rows) {
      if (await bcrypt.compare(password, row.secret_hash)) return { kind: "node", layout: row.slug, node: row.node_id };
    }
    return null;
  };
}
