/**
 * Password hashes. bcrypt reads only the first 72 bytes of what it is given, so two long
 * passphrases that share those bytes would both sign in. New hashes are therefore bcrypt of
 * the password's SHA-256 digest (base64: 44 bytes, no NUL), marked with `PREHASHED_PREFIX`;
 * a hash without the mark is a plain bcrypt hash from before, and still verifies as one (a
 * password of 72 bytes or fewer keeps working; a longer one keeps bcrypt's old truncation
 * until it is next changed).
 */
import { createHash } from "node:crypto";
import bcrypt from "bcryptjs";

const BCRYPT_ROUNDS = 10;
/** Marks a hash of the SHA-256 pre-hash (the rest is an ordinary bcrypt hash). */
export const PREHASHED_PREFIX = "sha256+";

const preHash = (password: string) => createHash("sha256").update(password, "utf8").digest("base64");

export async function hashSecret(password: string): Promise<string> {
  return PREHASHED_PREFIX + (await bcrypt.hash(preHash(password), BCRYPT_ROUNDS));
}

export function hashSecretSync(password: string): string {
  return PREHASHED_PREFIX + bcrypt.hashSync(preHash(password), BCRYPT_ROUNDS);
}

export function verifySecret(password: string, hash: string): Promise<boolean> {
  if (hash.startsWith(PREHASHED_PREFIX)) return bcrypt.compare(preHash(password), hash.slice(PREHASHED_PREFIX.length));
  return bcrypt.compare(password, hash);
}
