/**
 * How board secrets are stored and checked.
 *
 * A board's secret is 24 random bytes (192 bits), issued by the server, never chosen by a
 * person. Nobody can guess it, so a slow password hash buys nothing against a stolen
 * database; it only costs the broker's one thread tens of milliseconds per attempt, which a
 * storm of wrong passwords turns into seconds of stalled traffic. A SHA-256 digest of such a
 * secret is as hard to invert and takes microseconds.
 *
 * Stored form: `sha256:<base64url digest>`. Hashes issued before (bcrypt, `$2…`) keep working:
 * the broker checks them the slow way once, then stores the fast form (migration 005).
 */
import { createHash, timingSafeEqual } from "node:crypto";
import bcrypt from "bcryptjs";

const PREFIX = "sha256:";

/** PostgreSQL NOTIFY channel: a node's secret was re-issued or its record removed (migration 018). */
export const NODE_CREDENTIALS_CHANNEL = "blocklight_node_credentials";

export function hashNodeSecret(secret: string): string {
  return PREFIX + createHash("sha256").update(secret, "utf8").digest("base64url");
}

export const isLegacyNodeHash = (stored: string) => !stored.startsWith(PREFIX);

/**
 * Does `secret` match the stored hash? `rehash` is set when it matched a legacy hash and the
 * fast form should replace it.
 */
export async function checkNodeSecret(secret: string, stored: string): Promise<{ ok: boolean; rehash?: string }> {
  if (!isLegacyNodeHash(stored)) {
    const a = Buffer.from(hashNodeSecret(secret));
    const b = Buffer.from(stored);
    return { ok: a.length === b.length && timingSafeEqual(a, b) };
  }
  if (!stored.startsWith("$2")) return { ok: false };
  const ok = await bcrypt.compare(secret, stored);
  return ok ? { ok, rehash: hashNodeSecret(secret) } : { ok };
}
