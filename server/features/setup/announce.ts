/**
 * What `npm start` prints on a fresh install (DEMO=off, no account yet): the one-time
 * setup link. Kept here so the launcher only has to call it.
 */
import path from "node:path";
import { setupLink } from "./service";
import { SETUP_TOKEN_FILE } from "./token";

export function setupBannerLines(baseUrl: string, token: string | null, dataDir: string): string[] {
  if (!token) return [];
  return [
    "  no account exists yet: set up your society (once) by opening",
    `    ${setupLink(baseUrl, token)}`,
    `    (the token is also in ${path.join(dataDir, SETUP_TOKEN_FILE)}; it stops working once setup is done)`,
  ];
}
