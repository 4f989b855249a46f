/**
 * Attack pass, things that held: kept as tests so they keep holding. A forged or unsigned
 * session cookie signs nobody in, a cookie planted before sign-in is never adopted (no
 * session fixation), and a demoted member's open cookie loses the old role's rights at once.
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { DEMO_PASSWORD, demoEmail } from "../../server/db/seed/demo";
import { startTestApp, type TestApp } from "../support/testApp";

const b64 = (value: object) => Buffer.from(JSON.stringify(value)).toString("base64url");

describe("session cookies that must not work", () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp();
  });
  afterAll(async () => {
    await t.close();
  });

  it("an unsigned (alg none) cookie naming a real session is 401", async () => {
    await t.signIn("admin");
    const session = await t.deps.db.models.AuthSession.findOne();
    const forged = `${b64({ alg: "none", typ: "JWT" })}.${b64({ sid: session!.id, sub: String(session!.userId) })}.`;
    const res = await request(t.app).get("/api/me").set("Cookie", `blocklight_session=${forged}`);
    expect(res.status).toBe(401);
  });

  it("a cookie planted before sign-in is replaced, not adopted", async () => {
    const planted = "attacker-chosen-value";
    const res = await request(t.app).post("/api/auth/login").set("Cookie", `blocklight_session=${planted}`).send({ email: demoEmail("viewer"), password: DEMO_PASSWORD });
    expect(res.status).toBe(200);
    const set = ([] as string[]).concat(res.headers["set-cookie"] ?? []).find((c) => c.startsWith("blocklight_session="))!;
    expect(set).not.toContain(planted);
    expect(set).toMatch(/SameSite=Strict/i);
    expect((await request(t.app).get("/api/me").set("Cookie", `blocklight_session=${planted}`)).status).toBe(401);
  });

  it("a demoted engineer's open cookie can no longer edit alarm settings", async () => {
    const engineer = await t.signIn("engineer");
    expect((await engineer.put("/api/layouts/kestrel-bank/alarm-settings").send({ stuckAfterMs: 5_000 })).status).toBe(200);
    const admin = await t.signIn("admin");
    const id = (await engineer.get("/api/me")).body.user.id;
    expect((await admin.patch(`/api/admin/members/${id}`).send({ role: "viewer" })).status).toBe(200);
    expect((await engineer.put("/api/layouts/kestrel-bank/alarm-settings").send({ stuckAfterMs: 6_000 })).status).toBe(403);
  });
});
