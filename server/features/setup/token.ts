/**
 * The one-time setup token of a fresh install (CONTRACT.md §6): random, kept only in
 * `DATA_DIR/setup-token` (mode 0600) while no account exists, and removed once setup is
 * done. Whoever can read that file or the console of `npm start` may claim the install.
 */
import { createHash, randomBytes, timingSafeEqual } from "node:crypto";
import fs from "node:fs";
import path from "node:path";

export const SETUP_TOKEN_FILE = "setup-token";
const SETUP_TOKEN_BYTES = 24;

export const setupTokenPath = (dataDir: string) => path.join(dataDir, SETUP_TOKEN_FILE);

export function readSetupToken(dataDir: string): string | null {
  try {
    const token = fs.readFileSync(setupTokenPath(dataDir), "utf8").trim();
    return token || null;
  } catch {
    return null;
  }
}

/** The token already issued for this data directory, or a new one written to the file. */
export function ensureSetupToken(dataDir: string): string {
  const existing = readSetupToken(dataDir);
  if (existing) return existing;
  fs.mkdirSync(dataDir, { recursive: true });
  const token = randomBytes(SETUP_TOKEN_BYTES).toString("base64url");
  fs.writeFileSync(setupTokenPath(dataDir), token + "\n", { mode: 0o600 });
  return token;
}

export function removeSetupToken(dataDir: string): void {
  fs.rmSync(setupTokenPath(dataDir), { force: true });
}

/** Compared as sha256 digests with timingSafeEqual, so neither length nor content leaks through timing. */
export function setupTokenMatches(dataDir: string, given: string): boolean {
  const expected = readSetupToken(dataDir);
  if (!expected) return false;
  const digest = (s: string) => createHash("sha256").update(s, "utf8").digest();
  return timingSafeEqual(digest(expected), digest(given));
}
