/**
 * Boots the real app against a fresh database of its own in the test run's PostgreSQL.
 */
import { randomBytes } from "node:crypto";
import pg from "pg";
import request from "supertest";
import { inject } from "vitest";
import { createApp, type ApiRouterFactory } from "../../server/app";
import { Bus } from "../../server/bus";
import { configFromEnv, type AppConfig } from "../../server/config";
import { openDatabase } from "../../server/db/database";
import { DEMO_PASSWORD, demoEmail, seedDemo } from "../../server/db/seed/demo";
import type { AppDeps } from "../../server/deps";
import { createLogger } from "../../server/logger";
import type { Role } from "@shared/contract/rest";

/** Creates an empty database and returns its URL. */
export async function createTestDatabase(): Promise<string> {
  const adminUrl = inject("pgAdminUrl");
  const name = `t_${randomBytes(6).toString("hex")}`;
  const client = new pg.Client({ connectionString: adminUrl });
  await client.connect();
  await client.query(`CREATE DATABASE ${name}`);
  await client.end();
  return adminUrl.replace(/\/postgres$/, `/${name}`);
}

export interface TestApp {
  deps: AppDeps;
  app: ReturnType<typeof createApp>;
  /** A supertest agent signed in with the demo account of `role` (cookies kept). */
  signIn(role: Role): Promise<ReturnType<typeof request.agent>>;
  close(): Promise<void>;
}

export async function startTestApp(
  options: { demo?: boolean; config?: Partial<AppConfig>; routers?: ApiRouterFactory[]; deps?: Partial<AppDeps> } = {},
): Promise<TestApp> {
  const url = await createTestDatabase();
  const db = await openDatabase(url, { poolMax: 5 });
  const config: AppConfig = {
    ...configFromEnv({}),
    sessionSecret: randomBytes(16).toString("hex"),
    serveClient: false,
    loginLimitPerWindow: 1000,
    ...options.config,
  };
  const logger = createLogger("silent");
  const deps: AppDeps = { config, db, logger, bus: new Bus(logger), ...options.deps };
  if (options.demo ?? true) await seedDemo(deps);
  const app = createApp(deps, options.routers);
  return {
    deps,
    app,
    async signIn(role) {
      const agent = request.agent(app);
      const res = await agent.post("/api/auth/login").send({ email: demoEmail(role), password: DEMO_PASSWORD });
      if (res.status !== 200) throw new Error(`sign-in as ${role} failed: ${res.status} ${JSON.stringify(res.body)}`);
      return agent;
    },
    close: () => db.close(),
  };
}
