/**
 * Accounts for a real society (issue 11, issue 10 item 8): first-start setup with its
 * one-time token, one's own name and password, sessions that end on sign-out and on a new
 * password, and password reset by e-mail (single use, one hour, on an injected clock).
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { QueryTypes } from "sequelize";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { DEMO_PASSWORD, demoEmail } from "../../server/db/seed/demo";
import { requestPasswordReset, RESET_TTL_MS } from "../../server/features/auth/reset";
import { prepareSetupToken } from "../../server/features/setup/service";
import { setupTokenPath } from "../../server/features/setup/token";
import { startTestApp, type TestApp } from "../support/testApp";
import { waitForValue } from "../support/waitFor";

const tempDataDir = () => fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-accounts-"));

/** The session cookie a login set, to replay it by hand after sign-out. */
function sessionCookie(res: request.Response): string {
  const header = ([] as string[]).concat(res.headers["set-cookie"] ?? []).find((c) => c.startsWith("blocklight_session="));
  if (!header) throw new Error("no session cookie set");
  return header.split(";")[0];
}

describe("first-start setup (DEMO=off)", () => {
  let t: TestApp;
  let dataDir: string;
  beforeAll(async () => {
    dataDir = tempDataDir();
    t = await startTestApp({ demo: false, config: { dataDir } });
  });
  afterAll(async () => {
    await t.close();
    fs.rmSync(dataDir, { recursive: true, force: true });
  });

  const body = (token: string) => ({ token, society: "Wrenfold Valley Garden Railway Club", name: "Ada Fernmoor", email: "Ada@Wrenfold.example", password: "ten-chars-at-least" });

  it("says setup is needed while no account exists, and nobody can sign in", async () => {
    expect((await request(t.app).get("/api/setup")).body).toEqual({ needed: true });
    expect((await request(t.app).get("/api/society")).body).toEqual({ name: null });
  });

  it("refuses a wrong token (403), and a missing token file refuses every token", async () => {
    const before = await request(t.app).post("/api/setup").send(body("anything"));
    expect(before.status).toBe(403);
    const token = await prepareSetupToken(t.deps);
    expect(token).toMatch(/^[A-Za-z0-9_-]{32}$/);
    expect(fs.readFileSync(setupTokenPath(dataDir), "utf8").trim()).toBe(token);
    expect((fs.statSync(setupTokenPath(dataDir)).mode & 0o777).toString(8)).toBe("600");
    // The same token on a second start: the printed link keeps working until it is used.
    expect(await prepareSetupToken(t.deps)).toBe(token);
    for (const wrong of [token!.slice(0, -1), token + "x", "", token!.toUpperCase()]) {
      const res = await request(t.app).post("/api/setup").send(body(wrong));
      expect(res.status, wrong).toBe(403);
      expect(res.body.error.code).toBe("bad_setup_token");
    }
    expect(await t.deps.db.models.User.count()).toBe(0);
  });

  it("lists every bad field with its path when the token is right", async () => {
    const token = await prepareSetupToken(t.deps);
    const res = await request(t.app).post("/api/setup").send({ token, society: "", name: "", email: "nope", password: "short" });
    expect(res.status).toBe(400);
    expect(res.body.error.details.map((d: { path: string }) => d.path).sort()).toEqual(["$.email", "$.name", "$.password", "$.society"]);
    expect(await t.deps.db.models.User.count()).toBe(0);
  });

  it("creates the society and its first admin, removes the token, and works only once", async () => {
    const token = (await prepareSetupToken(t.deps))!;
    const res = await request(t.app).post("/api/setup").send(body(token));
    expect(res.status).toBe(201);
    expect(fs.existsSync(setupTokenPath(dataDir))).toBe(false);
    expect((await request(t.app).get("/api/setup")).body).toEqual({ needed: false });
    expect((await request(t.app).get("/api/society")).body).toEqual({ name: "Wrenfold Valley Garden Railway Club" });

    const agent = request.agent(t.app);
    const login = await agent.post("/api/auth/login").send({ email: "ada@wrenfold.example", password: "ten-chars-at-least" });
    expect(login.status).toBe(200);
    expect(login.body.user).toMatchObject({ name: "Ada Fernmoor", role: "admin", email: "ada@wrenfold.example" });
    const audit = await agent.get("/api/admin/audit");
    expect(audit.body.entries.map((e: { action: string }) => e.action)).toContain("setup");

    const again = await request(t.app).post("/api/setup").send(body(token));
    expect(again.status).toBe(409);
    expect(await prepareSetupToken(t.deps)).toBeNull();
    expect(await t.deps.db.models.User.count()).toBe(1);
  });
});

describe("sessions end when they should", () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp();
  });
  afterAll(() => t.close());

  it("logout ends the token: replaying the old cookie is 401", async () => {
    const login = await request(t.app).post("/api/auth/login").send({ email: demoEmail("viewer"), password: DEMO_PASSWORD });
    const cookie = sessionCookie(login);
    expect((await request(t.app).get("/api/me").set("Cookie", cookie)).status).toBe(200);
    expect((await request(t.app).post("/api/auth/logout").set("Cookie", cookie)).status).toBe(200);
    const replay = await request(t.app).get("/api/me").set("Cookie", cookie);
    expect(replay.status).toBe(401);
    expect(replay.body.error.code).toBe("unauthenticated");
  });

  it("a session of another browser survives one browser's sign-out", async () => {
    const a = await t.signIn("signaller");
    const b = await t.signIn("signaller");
    await a.post("/api/auth/logout");
    expect((await a.get("/api/me")).status).toBe(401);
    expect((await b.get("/api/me")).status).toBe(200);
  });

  it("changing the password needs the current one, keeps this session and ends the others", async () => {
    const here = await t.signIn("engineer");
    const elsewhere = await t.signIn("engineer");

    const missing = await here.patch("/api/me").send({ password: "a-new-long-password" });
    expect(missing.status).toBe(400);
    expect(missing.body.error.details.map((d: { path: string }) => d.path)).toContain("$.currentPassword");
    const wrong = await here.patch("/api/me").send({ password: "a-new-long-password", currentPassword: "not-it" });
    expect(wrong.status).toBe(403);
    expect(wrong.body.error.details).toEqual([{ path: "$.currentPassword", message: "that is not your current password" }]);
    const short = await here.patch("/api/me").send({ password: "short", currentPassword: DEMO_PASSWORD });
    expect(short.status).toBe(400);
    expect((await elsewhere.get("/api/me")).status).toBe(200);

    const ok = await here.patch("/api/me").send({ password: "a-new-long-password", currentPassword: DEMO_PASSWORD });
    expect(ok.status).toBe(200);
    expect((await here.get("/api/me")).status).toBe(200);
    expect((await elsewhere.get("/api/me")).status).toBe(401);
    expect((await request(t.app).post("/api/auth/login").send({ email: demoEmail("engineer"), password: DEMO_PASSWORD })).status).toBe(401);
    expect((await request(t.app).post("/api/auth/login").send({ email: demoEmail("engineer"), password: "a-new-long-password" })).status).toBe(200);
  });

  it("changes one's own name (other sessions end too, as for any change made with the password), and alarm mail without a password", async () => {
    const me = await t.signIn("maintainer");
    const other = await t.signIn("maintainer");
    const nothing = await me.patch("/api/me").send({ currentPassword: DEMO_PASSWORD });
    expect(nothing.status).toBe(400);
    const renamed = await me.patch("/api/me").send({ name: "Wren Maintainer", currentPassword: DEMO_PASSWORD });
    expect(renamed.status).toBe(200);
    expect((await me.get("/api/me")).body.user.name).toBe("Wren Maintainer");
    expect((await other.get("/api/me")).status).toBe(401);

    expect((await me.get("/api/me")).body.user.alarmMail).toBe(true);
    const off = await me.patch("/api/me/preferences").send({ alarmMail: false });
    expect(off.status).toBe(200);
    expect((await me.get("/api/me")).body.user.alarmMail).toBe(false);
    expect((await me.patch("/api/me/preferences").send({ alarmMail: "yes" })).status).toBe(400);
    expect((await me.patch("/api/me/preferences").send({ alarmMail: false, role: "admin" })).status).toBe(400);
  });
});

describe("password reset by e-mail", () => {
  let t: TestApp;
  let now = Date.parse("2026-05-02T10:00:00.000Z");
  beforeAll(async () => {
    t = await startTestApp({ deps: { clock: () => now } });
  });
  afterAll(() => t.close());

  async function mailedToken(email: string, after: number): Promise<string> {
    const rows = await waitForValue(async () => {
      const found = await t.deps.db.sequelize.query<{ id: number; body_text: string }>(`SELECT id, body_text FROM mail_outbox WHERE to_address = :email AND id > :after ORDER BY id DESC`, {
        replacements: { email, after },
        type: QueryTypes.SELECT,
      });
      return found.length ? found : undefined;
    }, `the reset mail to ${email}`);
    return /\/reset-password\/([A-Za-z0-9_-]+)/.exec(rows[0].body_text)![1];
  }
  const lastMailId = async () =>
    ((await t.deps.db.sequelize.query<{ id: number | null }>(`SELECT max(id) AS id FROM mail_outbox`, { type: QueryTypes.SELECT }))[0].id ?? 0);

  it("answers 202 the same whether or not the address is a member's", async () => {
    const known = await request(t.app).post("/api/auth/reset").send({ email: demoEmail("signaller") });
    const unknown = await request(t.app).post("/api/auth/reset").send({ email: "nobody@fernmoor.example" });
    expect(known.status).toBe(202);
    expect(unknown.status).toBe(202);
    expect(unknown.body).toEqual(known.body);
    expect((await request(t.app).post("/api/auth/reset").send({ email: "not an address" })).status).toBe(400);
  });

  it("a reset link works once, ends every session, and the new password signs in", async () => {
    const session = await t.signIn("viewer");
    const after = await lastMailId();
    await request(t.app).post("/api/auth/reset").send({ email: demoEmail("viewer") });
    const token = await mailedToken(demoEmail("viewer"), after);

    expect((await request(t.app).post(`/api/auth/reset/${token}`).send({ password: "short" })).status).toBe(400);
    const ok = await request(t.app).post(`/api/auth/reset/${token}`).send({ password: "viewer-new-password" });
    expect(ok.status).toBe(200);
    expect((await session.get("/api/me")).status).toBe(401);
    expect((await request(t.app).post("/api/auth/login").send({ email: demoEmail("viewer"), password: "viewer-new-password" })).status).toBe(200);

    const twice = await request(t.app).post(`/api/auth/reset/${token}`).send({ password: "viewer-other-password" });
    expect(twice.status).toBe(404);
    expect((await request(t.app).post("/api/auth/login").send({ email: demoEmail("viewer"), password: "viewer-other-password" })).status).toBe(401);
  });

  it("a link still works just inside the hour and not after it", async () => {
    let after = await lastMailId();
    await request(t.app).post("/api/auth/reset").send({ email: demoEmail("engineer") });
    const inTime = await mailedToken(demoEmail("engineer"), after);
    now += RESET_TTL_MS - 60_000;
    expect((await request(t.app).post(`/api/auth/reset/${inTime}`).send({ password: "engineer-new-password" })).status).toBe(200);

    after = await lastMailId();
    await request(t.app).post("/api/auth/reset").send({ email: demoEmail("engineer") });
    const late = await mailedToken(demoEmail("engineer"), after);
    now += RESET_TTL_MS + 1;
    const res = await request(t.app).post(`/api/auth/reset/${late}`).send({ password: "engineer-late-password" });
    expect(res.status).toBe(404);
    expect(res.body.error.message).toMatch(/not valid/);
  });

  it("only the newest link works, and one address gets at most a few mails an hour", async () => {
    now += 2 * RESET_TTL_MS;
    const after = await lastMailId();
    expect(await requestPasswordReset(t.deps, demoEmail("maintainer"))).toBe("sent");
    const first = await mailedToken(demoEmail("maintainer"), after);
    const afterFirst = await lastMailId();
    expect(await requestPasswordReset(t.deps, demoEmail("maintainer"))).toBe("sent");
    const second = await mailedToken(demoEmail("maintainer"), afterFirst);
    expect(second).not.toBe(first);
    expect(await requestPasswordReset(t.deps, demoEmail("maintainer"))).toBe("sent");
    expect(await requestPasswordReset(t.deps, demoEmail("maintainer"))).toBe("limited");
    expect(await requestPasswordReset(t.deps, "nobody@fernmoor.example")).toBe("no-account");
    expect((await request(t.app).post(`/api/auth/reset/${first}`).send({ password: "maintainer-new-pass" })).status).toBe(404);
  });

  it("limits reset requests per network address with 429", async () => {
    const limited = await startTestApp({ demo: false, config: { loginLimitPerWindow: 2 } });
    try {
      const statuses: number[] = [];
      for (let i = 0; i < 4; i++) statuses.push((await request(limited.app).post("/api/auth/reset").send({ email: "someone@fernmoor.example" })).status);
      expect(statuses).toEqual([202, 202, 429, 429]);
    } finally {
      await limited.close();
    }
  });
});
