/**
 * Mail through the local fake SMTP server into the outbox: invitations (and accepting one),
 * and alarm mail to maintainers who asked for it.
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { sendAlarmMail } from "../../server/features/mail/alarmMail";
import { parseMessage } from "../../server/features/mail/parse";
import { startMailer } from "../../server/features/mail/service";
import { startTestApp, type TestApp } from "../support/testApp";
import { waitForValue } from "../support/waitFor";

describe("mail and invitations", () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp();
    t.deps.mail = await startMailer(t.deps);
  });
  afterAll(async () => {
    await t.deps.mail?.close();
    await t.close();
  });

  it("with no SMTP_URL, mail lands in the outbox through the local fake SMTP server", async () => {
    expect(t.deps.mail!.describe()).toMatch(/fake SMTP/);
    await t.deps.mail!.send({ to: "maintainer@fernmoor.example", subject: "Kestrel Bank: test ✓", text: "Line one\nLine two = fine, über long ".repeat(5) });
    const admin = await t.signIn("admin");
    const message = await waitForValue(async () => {
      const res = await admin.get("/api/admin/outbox");
      return res.body.messages.find((m: { subject: string }) => m.subject === "Kestrel Bank: test ✓");
    }, "the mail");
    expect(message.to).toBe("maintainer@fernmoor.example");
    expect(message.body).toContain("Line two = fine, über long");
    expect(message.sentAt).not.toBeNull();
  });

  it("an invitation is mailed with a link that creates the member", async () => {
    const admin = await t.signIn("admin");
    const res = await admin.post("/api/invitations").send({ email: "new.signaller@fernmoor.example", role: "signaller" });
    expect(res.status).toBe(201);
    const mail = await waitForValue(async () => {
      const out = await admin.get("/api/admin/outbox");
      return out.body.messages.find((m: { to: string }) => m.to === "new.signaller@fernmoor.example");
    }, "the invitation mail");
    const token = /\/invite\/([A-Za-z0-9_-]+)/.exec(mail.body)?.[1];
    expect(token).toBeTruthy();

    const preview = await request(t.app).get(`/api/invitations/${token}`);
    expect(preview.body).toMatchObject({ email: "new.signaller@fernmoor.example", role: "signaller" });
    const tooShort = await request(t.app).post(`/api/invitations/${token}/accept`).send({ name: "Wren Signaller", password: "short" });
    expect(tooShort.status).toBe(400);
    const accepted = await request(t.app).post(`/api/invitations/${token}/accept`).send({ name: "Wren Signaller", password: "a-long-password" });
    expect(accepted.status).toBe(201);
    const again = await request(t.app).post(`/api/invitations/${token}/accept`).send({ name: "Wren Signaller", password: "a-long-password" });
    expect(again.status).toBe(404);

    const login = await request(t.app).post("/api/auth/login").send({ email: "new.signaller@fernmoor.example", password: "a-long-password" });
    expect(login.status).toBe(200);
    const members = await admin.get("/api/admin/members");
    expect(members.body.members.find((m: { email: string }) => m.email === "new.signaller@fernmoor.example")?.role).toBe("signaller");
  });

  it("inviting an existing member is a conflict", async () => {
    const admin = await t.signIn("admin");
    const res = await admin.post("/api/invitations").send({ email: "viewer@fernmoor.example", role: "viewer" });
    expect(res.status).toBe(409);
  });

  it("maintainers with alarm mail on get a mail when an alarm is raised", async () => {
    const sent = await sendAlarmMail(t.deps, {
      slug: "kestrel-bank",
      id: 1,
      kind: "stuck",
      subject: "junction",
      message: "Counter junction has been above 0 for over 10 min",
      raisedAt: "2026-05-02T10:15:03.120Z",
      acknowledgedAt: null,
      acknowledgedBy: null,
      comment: null,
      clearedAt: null,
      occurrences: 1,
      lastSeenAt: "2026-05-02T10:15:03.120Z",
    });
    expect(sent).toBe(1); // the demo maintainer has alarm mail on; nobody else does
    const admin = await t.signIn("admin");
    const mail = await waitForValue(async () => {
      const out = await admin.get("/api/admin/outbox");
      return out.body.messages.find((m: { subject: string }) => m.subject.includes("stuck alarm"));
    }, "the alarm mail");
    expect(mail.to).toBe("maintainer@fernmoor.example");
    expect(mail.body).toContain("/layouts/kestrel-bank/alarms");
  });

  it.each([
    ["plain", "Subject: Hello\r\n\r\nBody text", "Hello", "Body text"],
    ["quoted-printable", "Subject: =?UTF-8?Q?Caf=C3=A9?=\r\nContent-Transfer-Encoding: quoted-printable\r\n\r\nA =3D B=\r\n and on", "Café", "A = B and on"],
    ["base64", "Subject: =?UTF-8?B?w7xiZXI=?=\r\nContent-Transfer-Encoding: base64\r\n\r\nw7xiZXI=", "über", "über"],
  ])("reads a %s message", (_name, raw, subject, text) => {
    expect(parseMessage(raw)).toEqual({ subject, text });
  });
});
