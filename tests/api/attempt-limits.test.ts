/**
 * Every route that checks a guessable secret shares the sign-in limiter's rule
 * (server/http/attemptLimiter.ts): the first-start setup token, invitation tokens (preview and
 * accept) and password reset tokens. Past the budget: 429 `too_many_attempts`, nothing checked.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startTestApp, type TestApp } from "../support/testApp";

const LIMIT = 3;

describe("attempt limits on token routes", () => {
  let t: TestApp;
  let dataDir: string;
  beforeAll(async () => {
    dataDir = fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-limits-"));
    t = await startTestApp({ demo: false, config: { dataDir, loginLimitPerWindow: LIMIT } });
  });
  afterAll(async () => {
    await t.close();
    fs.rmSync(dataDir, { recursive: true, force: true });
  });

  const password = "ten-chars-at-least";
  it.each([
    ["POST /api/setup", () => request(t.app).post("/api/setup").send({ token: "guess", society: "Fernmoor Garden Line", name: "Ada Fernmoor", email: "ada@fernmoor.example", password })],
    ["GET /api/invitations/:token", () => request(t.app).get("/api/invitations/guessed-token-0000")],
    ["POST /api/invitations/:token/accept", () => request(t.app).post("/api/invitations/guessed-token-0000/accept").send({ name: "Ada Fernmoor", password })],
    ["POST /api/auth/reset/:token", () => request(t.app).post("/api/auth/reset/guessed-token-0000").send({ password })],
  ] as const)("%s: refused 429 past the budget", async (_route, attempt) => {
    for (let i = 0; i < LIMIT; i++) expect((await attempt()).status).not.toBe(429);
    const refused = await attempt();
    expect(refused.status).toBe(429);
    expect(refused.body.error.code).toBe("too_many_attempts");
  });
});
