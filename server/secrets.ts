/**
 * Secrets the server makes for itself on first start and keeps in DATA_DIR, so sessions
 * survive a restart without anyone having to configure a signing key.
 */
import fs from "node:fs";
import path from "node:path";
import { randomSecret } from "./config";

export function loadOrCreateSecret(dataDir: string, name: string): string {
  const file = path.join(dataDir, "secrets", name);
  if (fs.existsSync(file)) return fs.readFileSync(file, "utf8").trim();
  fs.mkdirSync(path.dirname(file), { recursive: true, mode: 0o700 });
  const secret = randomSecret();
  fs.writeFileSync(file, secret, { mode: 0o600 });
  return secret;
}
