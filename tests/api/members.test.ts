/**
 * The admin's member changes (issue 11 item 4): roles and alarm mail, removing a member
 * (their sessions end), revoking and resending invitations (a second invitation replaces
 * the first), the last-admin rule, and the audit of every one of them.
 */
import { QueryTypes } from "sequelize";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { DEMO_PASSWORD, demoEmail } from "../../server/db/seed/demo";
import { startTestApp, type TestApp } from "../support/testApp";

type Agent = Awaited<ReturnType<TestApp["signIn"]>>;

describe("members and invitations", () => {
  let t: TestApp;
  let admin: Agent;
  beforeAll(async () => {
    t = await startTestApp();
    admin = await t.signIn("admin");
  });
  afterAll(() => t.close());

  const idOf = async (email: string) => (await t.deps.db.models.User.findOne({ where: { email } }))!.id;
  /** The newest invitation link mailed to `email` (no mailer runs here: the outbox keeps it). */
  async function invitationToken(email: string): Promise<string> {
    const rows = await t.deps.db.sequelize.query<{ body_text: string }>(`SELECT body_text FROM mail_outbox WHERE to_address = :email ORDER BY id DESC LIMIT 1`, {
      replacements: { email },
      type: QueryTypes.SELECT,
    });
    return /\/invite\/([A-Za-z0-9_-]+)/.exec(rows[0].body_text)![1];
  }
  const auditActions = async () => (await admin.get("/api/admin/audit")).body.entries as { action: string; target: string; before: unknown; after: unknown; user: string }[];

  it("changes a role, which the member's next request already carries", async () => {
    const viewer = await t.signIn("viewer");
    const res = await admin.patch(`/api/admin/members/${await idOf(demoEmail("viewer"))}`).send({ role: "signaller" });
    expect(res.status).toBe(200);
    expect(res.body.member).toMatchObject({ email: demoEmail("viewer"), role: "signaller" });
    expect((await viewer.get("/api/me")).body.user.role).toBe("signaller");
    const entry = (await auditActions()).find((e) => e.action === "member.update" && e.target === demoEmail("viewer"));
    expect(entry).toMatchObject({ user: "Fernmoor Admin", before: { role: "viewer" }, after: { role: "signaller" } });
  });

  it("turns a member's alarm mail on and off", async () => {
    const id = await idOf(demoEmail("signaller"));
    expect((await admin.patch(`/api/admin/members/${id}`).send({ alarmMail: true })).body.member.alarmMail).toBe(true);
    expect((await admin.get("/api/admin/members")).body.members.find((m: { id: number }) => m.id === id).alarmMail).toBe(true);
    expect((await admin.patch(`/api/admin/members/${id}`).send({ alarmMail: false })).body.member.alarmMail).toBe(false);
  });

  it.each([
    ["an empty body", "1", {}, 400],
    ["an unknown role", "1", { role: "owner" }, 400],
    ["an extra field", "1", { role: "viewer", email: "x@fernmoor.example" }, 400],
    ["an id that is not a number", "abc", { alarmMail: true }, 400],
    ["an id out of range", "99999999999", { alarmMail: true }, 400],
    ["an unknown member", "9999", { alarmMail: true }, 404],
  ])("refuses %s and changes nothing", async (_name, id, body, status) => {
    const before = (await admin.get("/api/admin/members")).body.members;
    const res = await admin.patch(`/api/admin/members/${id}`).send(body);
    expect(res.status).toBe(status);
    expect(res.body.error.code).toBeTruthy();
    expect((await admin.get("/api/admin/members")).body.members).toEqual(before);
  });

  it("the last admin can be neither demoted nor removed (409, said plainly)", async () => {
    const adminId = await idOf(demoEmail("admin"));
    const demote = await admin.patch(`/api/admin/members/${adminId}`).send({ role: "engineer" });
    expect(demote.status).toBe(409);
    expect(demote.body.error).toMatchObject({ code: "last_admin" });
    expect(demote.body.error.message).toBe("Fernmoor Admin is the society's last admin and cannot be demoted: make another member an admin first");
    const remove = await admin.delete(`/api/admin/members/${adminId}`);
    expect(remove.status).toBe(409);
    expect(remove.body.error.message).toMatch(/last admin and cannot be removed/);
    // Keeping the role while changing something else is fine.
    expect((await admin.patch(`/api/admin/members/${adminId}`).send({ role: "admin", alarmMail: false })).status).toBe(200);

    // With a second admin, either may step down — but not both.
    const engineerId = await idOf(demoEmail("engineer"));
    expect((await admin.patch(`/api/admin/members/${engineerId}`).send({ role: "admin" })).status).toBe(200);
    const engineer = await t.signIn("engineer");
    const both = await Promise.all([
      admin.patch(`/api/admin/members/${adminId}`).send({ role: "viewer" }),
      engineer.patch(`/api/admin/members/${engineerId}`).send({ role: "viewer" }),
    ]);
    expect(both.map((r) => r.status).sort()).toEqual([200, 409]);
    expect(await t.deps.db.models.User.count({ where: { role: "admin" } })).toBe(1);
    // Put the demo admin back for the tests below.
    const stillAdmin = both[0].status === 200 ? engineer : admin;
    expect((await stillAdmin.patch(`/api/admin/members/${adminId}`).send({ role: "admin" })).status).toBe(200);
    admin = await t.signIn("admin");
    expect((await admin.patch(`/api/admin/members/${engineerId}`).send({ role: "engineer" })).status).toBe(200);
  });

  it("removes a member: their sessions end at once and the audit keeps who it was", async () => {
    const maintainer = await t.signIn("maintainer");
    const id = await idOf(demoEmail("maintainer"));
    expect((await admin.delete(`/api/admin/members/${id}`)).status).toBe(204);
    expect((await maintainer.get("/api/me")).status).toBe(401);
    expect((await request(t.app).post("/api/auth/login").send({ email: demoEmail("maintainer"), password: DEMO_PASSWORD })).status).toBe(401);
    expect((await admin.get("/api/admin/members")).body.members.map((m: { email: string }) => m.email)).not.toContain(demoEmail("maintainer"));
    expect((await admin.delete(`/api/admin/members/${id}`)).status).toBe(404);
    const entry = (await auditActions()).find((e) => e.action === "member.remove");
    expect(entry).toMatchObject({ target: demoEmail("maintainer"), before: { name: "Fernmoor Maintainer", role: "maintainer" } });
  });

  it("a second invitation to the same address replaces the first", async () => {
    const email = "wren.signaller@fernmoor.example";
    expect((await admin.post("/api/invitations").send({ email, role: "viewer" })).status).toBe(201);
    const first = await invitationToken(email);
    expect((await admin.post("/api/invitations").send({ email, role: "signaller" })).status).toBe(201);
    const second = await invitationToken(email);
    expect((await request(t.app).get(`/api/invitations/${first}`)).status).toBe(404);
    expect((await request(t.app).get(`/api/invitations/${second}`)).body).toMatchObject({ email, role: "signaller" });
    const listed = (await admin.get("/api/admin/members")).body.invitations.filter((i: { email: string }) => i.email === email);
    expect(listed.map((i: { revokedAt: string | null }) => i.revokedAt === null)).toEqual([true, false]);
    expect((await auditActions()).find((e) => e.action === "invitation.send" && e.target === email && (e.after as { replaced: number }).replaced === 1)).toBeTruthy();
  });

  it("resends an invitation with a new link (the old one stops working) and revokes one", async () => {
    const email = "kestrel.viewer@fernmoor.example";
    const { id } = (await admin.post("/api/invitations").send({ email, role: "viewer" })).body;
    const old = await invitationToken(email);
    expect((await admin.post(`/api/admin/invitations/${id}/resend`)).status).toBe(200);
    const fresh = await invitationToken(email);
    expect(fresh).not.toBe(old);
    expect((await request(t.app).get(`/api/invitations/${old}`)).status).toBe(404);
    expect((await request(t.app).get(`/api/invitations/${fresh}`)).status).toBe(200);

    expect((await admin.delete(`/api/admin/invitations/${id}`)).status).toBe(204);
    expect((await request(t.app).get(`/api/invitations/${fresh}`)).status).toBe(404);
    expect((await request(t.app).post(`/api/invitations/${fresh}/accept`).send({ name: "Kestrel Viewer", password: "a-long-password" })).status).toBe(404);
    const resendRevoked = await admin.post(`/api/admin/invitations/${id}/resend`);
    expect(resendRevoked.status).toBe(409);
    expect((await admin.delete(`/api/admin/invitations/${id}`)).status).toBe(409);
    expect((await admin.delete(`/api/admin/invitations/99999`)).status).toBe(404);
    const actions = (await auditActions()).filter((e) => e.target === email).map((e) => e.action);
    expect(actions).toEqual(["invitation.revoke", "invitation.resend", "invitation.send"]);
  });

  it("renames the society (admins only), and the new name is what everyone reads", async () => {
    expect((await request(t.app).get("/api/society")).body).toEqual({ name: "Fernmoor Garden Railway Society" });
    expect((await admin.patch("/api/society").send({ name: "  " })).status).toBe(400);
    const res = await admin.patch("/api/society").send({ name: "Fernmoor Valley Railway Club" });
    expect(res.status).toBe(200);
    expect((await request(t.app).get("/api/society")).body).toEqual({ name: "Fernmoor Valley Railway Club" });
    expect((await auditActions()).find((e) => e.action === "society.rename")).toMatchObject({ before: { name: "Fernmoor Garden Railway Society" }, after: { name: "Fernmoor Valley Railway Club" } });
  });

  it("an accepted invitation can be neither resent nor revoked", async () => {
    const email = "bank.engineer@fernmoor.example";
    const { id } = (await admin.post("/api/invitations").send({ email, role: "engineer" })).body;
    const token = await invitationToken(email);
    expect((await request(t.app).post(`/api/invitations/${token}/accept`).send({ name: "Bank Engineer", password: "a-long-password" })).status).toBe(201);
    expect((await admin.post(`/api/admin/invitations/${id}/resend`)).status).toBe(409);
    expect((await admin.delete(`/api/admin/invitations/${id}`)).status).toBe(409);
    expect((await auditActions()).map((e) => e.action)).toContain("invitation.accept");
  });
});
