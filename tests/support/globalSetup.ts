/**
 * One throwaway PostgreSQL cluster for the whole test run, on a free port in a temporary
 * directory, with fsync off (tests only). Each test file makes its own database in it.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import type { TestProject } from "vitest/node";
import { freePort, startEmbeddedPostgres } from "../../server/db/embeddedPostgres";

declare module "vitest" {
  export interface ProvidedContext {
    pgAdminUrl: string;
  }
}

export default async function setup(project: TestProject) {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-test-"));
  const pg = await startEmbeddedPostgres({ dataDir, port: await freePort(), ephemeral: true });
  project.provide("pgAdminUrl", pg.adminUrl);
  return () => {
    pg.stop();
    fs.rmSync(dataDir, { recursive: true, force: true });
  };
}
