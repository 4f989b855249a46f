/**
 * Long passphrases (bcrypt reads only 72 bytes): two passphrases that share their first 72
 * bytes are two different passwords; hashes made before the pre-hash still sign in.
 */
import bcrypt from "bcryptjs";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { DEMO_PASSWORD, demoEmail } from "../../server/db/seed/demo";
import { PREHASHED_PREFIX } from "../../server/features/auth/passwordHash";
import { startTestApp, type TestApp } from "../support/testApp";

describe("passwords longer than 72 bytes", () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp();
  });
  afterAll(async () => {
    await t.close();
  });
  const login = (email: string, password: string) => request(t.app).post("/api/auth/login").send({ email, password });

  it("a long passphrase signs in only when it is whole: one sharing its first 72 bytes is refused", async () => {
    const shared = "the fernmoor coal train waits at the siding home signal until the bank is clear ";
    expect(Buffer.byteLength(shared)).toBeGreaterThan(72);
    const mine = `${shared}and then the quarry`;
    const other = `${shared}but never the branch`;
    const agent = await t.signIn("signaller");
    const changed = await agent.patch("/api/me").send({ currentPassword: DEMO_PASSWORD, password: mine });
    expect(changed.status, JSON.stringify(changed.body)).toBe(200);
    expect((await login(demoEmail("signaller"), mine)).status).toBe(200);
    expect((await login(demoEmail("signaller"), other)).status).toBe(401);
    expect((await login(demoEmail("signaller"), shared)).status).toBe(401);

    const user = await t.deps.db.models.User.findOne({ where: { email: demoEmail("signaller") } });
    expect(user!.passwordHash.startsWith(PREHASHED_PREFIX)).toBe(true);
  });

  it("a plain bcrypt hash from before keeps verifying", async () => {
    await t.deps.db.models.User.update({ passwordHash: bcrypt.hashSync("an older password", 4) }, { where: { email: demoEmail("engineer") } });
    expect((await login(demoEmail("engineer"), "an older password")).status).toBe(200);
    expect((await login(demoEmail("engineer"), "an older passwort")).status).toBe(401);
  });
});
