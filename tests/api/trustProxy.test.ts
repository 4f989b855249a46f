/**
 * Issue 10: "rotating X-Forwarded-For from loopback bypasses the sign-in limit". The header
 * counts only when TRUST_PROXY says a proxy is in front.
 */
import request from "supertest";
import { afterEach, describe, expect, it } from "vitest";
import { configFromEnv } from "../../server/config";
import { demoEmail } from "../../server/db/seed/demo";
import { startTestApp, type TestApp } from "../support/testApp";

const LIMIT = 3;

async function rotatingAttempts(t: TestApp, n: number): Promise<number[]> {
  const statuses: number[] = [];
  for (let i = 0; i < n; i++) {
    const res = await request(t.app)
      .post("/api/auth/login")
      .set("X-Forwarded-For", `203.0.113.${i + 1}`)
      .send({ email: demoEmail("admin"), password: `guess-${i}` });
    statuses.push(res.status);
  }
  return statuses;
}

describe("trust proxy only when TRUST_PROXY is set", () => {
  let t: TestApp | undefined;
  afterEach(async () => {
    await t?.close();
    t = undefined;
  });

  it("without TRUST_PROXY, a rotating X-Forwarded-For does not get round the sign-in limit", async () => {
    t = await startTestApp({ config: { loginLimitPerWindow: LIMIT, trustProxy: configFromEnv({}).trustProxy } });
    const statuses = await rotatingAttempts(t, LIMIT + 3);
    expect(statuses.slice(0, LIMIT)).toEqual([401, 401, 401]);
    expect(statuses.slice(LIMIT)).toEqual([429, 429, 429]);
  });

  it("with TRUST_PROXY=loopback, each forwarded address has a limit of its own", async () => {
    t = await startTestApp({ config: { loginLimitPerWindow: LIMIT, trustProxy: configFromEnv({ TRUST_PROXY: "loopback" }).trustProxy } });
    expect(await rotatingAttempts(t, LIMIT + 3)).toEqual(Array(LIMIT + 3).fill(401));
  });

  it.each([
    [undefined, null],
    ["", null],
    ["1", 1],
    ["loopback", "loopback"],
    ["10.0.0.1, 10.0.0.2", "10.0.0.1, 10.0.0.2"],
  ])("TRUST_PROXY=%j reads as %j", (value, expected) => {
    expect(configFromEnv(value === undefined ? {} : { TRUST_PROXY: value }).trustProxy).toEqual(expected);
  });
});
