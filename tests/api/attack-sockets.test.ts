/**
 * Attack pass, sockets: a live socket is let in by the session cookie at its handshake, so
 * it must not outlive that session. Signing out, being removed, a password changed (or reset)
 * elsewhere: the socket opened with the ended session is disconnected, and a new one made with
 * the old cookie joins nothing. Sockets of the account's other, still valid sessions stay.
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { DEMO_PASSWORD, demoEmail } from "../../server/db/seed/demo";
import { hashSecret } from "../../server/features/auth/service";
import type { Role } from "@shared/contract/rest";
import { connectBrowser, join, startLiveHarness, type LiveHarness } from "../support/live";
import { startTestApp, type TestApp } from "../support/testApp";

const SLUG = "kestrel-bank";
/** Long enough for a disconnect pushed by the server; the failing case is a socket still up after it. */
const DISCONNECT_WAIT_MS = 3_000;

describe("live sockets end with their session", () => {
  let t: TestApp;
  let h: LiveHarness;
  beforeAll(async () => {
    t = await startTestApp();
    h = await startLiveHarness(t);
  });
  afterAll(async () => {
    await h.close();
    await t.close();
  });

  /** Signs in as `email` and returns the agent and its raw cookie, for a socket handshake. */
  async function browserOf(email: string, password = DEMO_PASSWORD) {
    const agent = request.agent(t.app);
    const res = await agent.post("/api/auth/login").send({ email, password });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const cookie = ([] as string[]).concat(res.headers["set-cookie"] ?? []).find((c) => c.startsWith("blocklight_session="))!.split(";")[0];
    const browser = await connectBrowser(h.httpUrl, cookie);
    expect((await join(browser.socket, SLUG)).ok).toBe(true);
    const disconnected = new Promise<boolean>((resolve) => {
      browser.socket.once("disconnect", () => resolve(true));
      setTimeout(() => resolve(false), DISCONNECT_WAIT_MS).unref();
    });
    return { agent, cookie, socket: browser.socket, disconnected };
  }

  async function joinsWithOldCookie(cookie: string): Promise<boolean> {
    const again = await connectBrowser(h.httpUrl, cookie);
    const joined = await join(again.socket, SLUG);
    again.socket.disconnect();
    return joined.ok;
  }

  async function newMember(role: Role, name: string) {
    const email = `${name.toLowerCase()}@fernmoor.example`;
    const row = await t.deps.db.models.User.create({ email, name, role, passwordHash: await hashSecret(DEMO_PASSWORD) });
    return { id: row.id, email };
  }

  it("signing out disconnects the socket opened with that session", async () => {
    const b = await browserOf(demoEmail("viewer"));
    expect((await b.agent.post("/api/auth/logout")).status).toBe(200);
    expect(await b.disconnected).toBe(true);
    expect(await joinsWithOldCookie(b.cookie)).toBe(false);
  });

  it("a removed member's socket is disconnected", async () => {
    const member = await newMember("signaller", "Wren");
    const b = await browserOf(member.email);
    const admin = await t.signIn("admin");
    expect((await admin.delete(`/api/admin/members/${member.id}`)).status).toBe(204);
    expect(await b.disconnected).toBe(true);
    expect(await joinsWithOldCookie(b.cookie)).toBe(false);
  });

  it("a new password ends the sockets of the other sessions, not the one that changed it", async () => {
    const member = await newMember("engineer", "Kestrel");
    const here = await browserOf(member.email);
    const elsewhere = await browserOf(member.email);
    const changed = await here.agent.patch("/api/me").send({ password: "a-new-password-here", currentPassword: DEMO_PASSWORD });
    expect(changed.status, JSON.stringify(changed.body)).toBe(200);
    expect(await elsewhere.disconnected).toBe(true);
    expect(await here.disconnected).toBe(false);
    expect(here.socket.connected).toBe(true);
    here.socket.disconnect();
  });

  it("a socket whose session has ended by any other way cannot join a layout", async () => {
    const member = await newMember("viewer", "Fern");
    const b = await browserOf(member.email);
    // Ended behind the server's back (expiry, or a row tidied away): the next join re-checks.
    await t.deps.db.models.AuthSession.destroy({ where: { userId: member.id } });
    const joined = await join(b.socket, SLUG);
    expect(joined.ok).toBe(false);
    b.socket.disconnect();
  });
});
