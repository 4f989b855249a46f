import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { DEMO_PASSWORD, demoEmail } from "../../server/db/seed/demo";
import { startTestApp, type TestApp } from "../support/testApp";

describe("sign-in", () => {
  let t: TestApp;
  beforeAll(async () => {
    // Behind a proxy on loopback, so X-Forwarded-For gives the rate-limit test an address of its own.
    t = await startTestApp({ config: { loginLimitPerWindow: 5, trustProxy: "loopback" } });
  });
  afterAll(() => t.close());

  it("sets an httpOnly, SameSite session cookie and /api/me returns the user", async () => {
    const agent = request.agent(t.app);
    const res = await agent.post("/api/auth/login").send({ email: demoEmail("signaller"), password: DEMO_PASSWORD });
    expect(res.status).toBe(200);
    const cookie = String(res.headers["set-cookie"]);
    expect(cookie).toMatch(/blocklight_session=/);
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Strict/i);
    const me = await agent.get("/api/me");
    expect(me.status).toBe(200);
    expect(me.body.user).toMatchObject({ email: "signaller@fernmoor.example", role: "signaller" });
    expect(JSON.stringify(me.body)).not.toMatch(/hash/i);
  });

  it("refuses a wrong password with 401 in the contract's error shape", async () => {
    const res = await request(t.app).post("/api/auth/login").send({ email: demoEmail("admin"), password: "wrong" });
    expect(res.status).toBe(401);
    expect(res.body.error).toMatchObject({ code: "bad_credentials" });
    expect(typeof res.body.error.message).toBe("string");
  });

  it("refuses a malformed body with 400 listing the fields", async () => {
    const res = await request(t.app).post("/api/auth/login").send({ email: "not-an-email" });
    expect(res.status).toBe(400);
    const paths = res.body.error.details.map((d: { path: string }) => d.path);
    expect(paths).toEqual(expect.arrayContaining(["$.email", "$.password"]));
  });

  it("signs out: the cookie is cleared and /api/me says 401", async () => {
    const agent = await t.signIn("viewer");
    expect((await agent.post("/api/auth/logout")).status).toBe(200);
    expect((await agent.get("/api/me")).status).toBe(401);
  });

  it("rate-limits sign-in attempts with 429", async () => {
    // A fresh address keeps this independent of the attempts above.
    const statuses: number[] = [];
    for (let i = 0; i < 8; i++) {
      const res = await request(t.app)
        .post("/api/auth/login")
        .set("X-Forwarded-For", "127.0.0.9")
        .send({ email: demoEmail("admin"), password: `guess-${i}` });
      statuses.push(res.status);
    }
    expect(statuses.filter((s) => s === 429).length).toBeGreaterThan(0);
    expect(statuses.slice(0, 3)).toEqual([401, 401, 401]);
  });
});
