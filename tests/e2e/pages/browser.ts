/**
 * Debian's chromium through playwright-core (STACK.md): one persistent context per "browser",
 * each in its own temporary profile, so a fresh context shares no cookies.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { chromium, type BrowserContext } from "playwright-core";

export const CHROMIUM = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";
export const CHROMIUM_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking", "--disable-component-update", "--disable-sync"];
export const ARTIFACTS = path.resolve("tests/artifacts");

export async function openBrowser(viewport = { width: 1400, height: 1000 }): Promise<{ context: BrowserContext; close(): Promise<void> }> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-chromium-"));
  const context = await chromium.launchPersistentContext(dir, { executablePath: CHROMIUM, args: CHROMIUM_ARGS, viewport });
  return {
    context,
    async close() {
      await context.close();
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}

export function chromiumAvailable(): boolean {
  return fs.existsSync(CHROMIUM);
}
