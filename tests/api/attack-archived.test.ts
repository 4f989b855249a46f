/**
 * Attack pass, archived layouts: "an archived layout stops running live and is read-only"
 * (CONTRACT.md §6). Every write that names one is refused with 409 `archived` and changes
 * nothing (alarm settings, display links, imports, proofs started or stored, alarm
 * acknowledgements, records, drafts, boards); revoking a display link (which only takes access away) still works, and restoring
 * makes the layout writable again.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { raiseAlarm } from "../../server/features/alarms/service";
import { storeProof } from "../../server/features/prove/service";
import { startTestApp, type TestApp } from "../support/testApp";

const SLUG = "wrenfold-loop";
const T0 = Date.parse("2026-05-02T09:00:00.000Z");

describe("an archived layout is read-only", () => {
  let t: TestApp;
  let linkToken = "";
  let alarmId = 0;
  let layoutId = 0;
  beforeAll(async () => {
    t = await startTestApp();
    layoutId = (await t.deps.db.models.Layout.findOne({ where: { slug: SLUG } }))!.id;
    alarmId = (await raiseAlarm(t.deps, { layoutId, kind: "node-offline", subject: "wrenfold-home", message: "the board went quiet" })).alarm.id;
    const admin = await t.signIn("admin");
    linkToken = (await admin.post(`/api/layouts/${SLUG}/display-links`).send({ label: "club room" })).body.token;
    expect((await admin.post(`/api/layouts/${SLUG}/archive`)).status).toBe(200);
  });
  afterAll(async () => {
    await t.close();
  });

  const logLine = () =>
    JSON.stringify({ kind: "tick", status: "accepted", receivedAt: new Date(T0).toISOString(), input: { type: "tick", at: T0 } }) + "\n";

  it("alarm settings cannot be changed", async () => {
    const engineer = await t.signIn("engineer");
    const before = (await engineer.get(`/api/layouts/${SLUG}/alarm-settings`)).body;
    const res = await engineer.put(`/api/layouts/${SLUG}/alarm-settings`).send({ stuckAfterMs: 5_000 });
    expect(res.status, JSON.stringify(res.body)).toBe(409);
    expect(res.body.error.code).toBe("archived");
    expect((await engineer.get(`/api/layouts/${SLUG}/alarm-settings`)).body).toEqual(before);
  });

  it("no new display link is made for it", async () => {
    const admin = await t.signIn("admin");
    const res = await admin.post(`/api/layouts/${SLUG}/display-links`).send({ label: "hall" });
    expect(res.status, JSON.stringify(res.body)).toBe(409);
    expect(res.body.error.code).toBe("archived");
    expect((await admin.get(`/api/layouts/${SLUG}/display-links`)).body.links).toHaveLength(1);
  });

  it("no event log is imported into it", async () => {
    const maintainer = await t.signIn("maintainer");
    const res = await maintainer.post(`/api/layouts/${SLUG}/sessions/import`).attach("file", Buffer.from(logLine()), "day.jsonl");
    expect(res.status, JSON.stringify(res.body)).toBe(409);
    expect(res.body.error.code).toBe("archived");
    expect((await maintainer.get(`/api/layouts/${SLUG}/sessions`)).body.sessions).toHaveLength(0);
  });

  it("no proof is started on it, and a proof that ends after the archiving is not stored", async () => {
    const engineer = await t.signIn("engineer");
    const { RulebookVersion } = t.deps.db.models;
    const row = (await RulebookVersion.findOne({ where: { layoutId }, order: [["version", "ASC"]] }))!;
    const res = await engineer.post(`/api/layouts/${SLUG}/rulebooks/${row.version}/proofs`);
    expect(res.status, JSON.stringify(res.body)).toBe(409);
    expect(res.body.error.code).toBe("archived");
    expect((await engineer.get(`/api/layouts/${SLUG}/proofs`)).body.jobs).toEqual([]);
    const user = (await engineer.get("/api/me")).body.user;
    const result = { verdict: "refuted" as const, properties: [], stats: { states: 1, ms: 1 } };
    await expect(storeProof(t.deps, layoutId, row.version, user, result)).rejects.toMatchObject({ status: 409, code: "archived" });
    const after = (await RulebookVersion.findOne({ where: { layoutId, version: row.version } }))!;
    expect({ status: after.status, proof: after.proof }).toEqual({ status: row.status, proof: row.proof });
  });

  it("its alarms cannot be acknowledged", async () => {
    const signaller = await t.signIn("signaller");
    const res = await signaller.post(`/api/alarms/${alarmId}/acknowledge`).send({ comment: "seen" });
    expect(res.status, JSON.stringify(res.body)).toBe(409);
    expect(res.body.error.code).toBe("archived");
    const open = (await signaller.get(`/api/layouts/${SLUG}/alarms`)).body.alarms as { id: number; acknowledgedAt: string | null }[];
    expect(open.find((a) => a.id === alarmId)?.acknowledgedAt).toBeNull();
  });

  it("no signaller command or session change is taken for it", async () => {
    const signaller = await t.signIn("signaller");
    const command = await signaller.post(`/api/layouts/${SLUG}/commands`).send({ type: "hold", signal: "W1", reason: "test" });
    expect(command.status, JSON.stringify(command.body)).toBe(409);
    expect(command.body.error.code).toBe("archived");
    const session = await signaller.post(`/api/layouts/${SLUG}/sessions`).send({ action: "open" });
    expect(session.status, JSON.stringify(session.body)).toBe(409);
    expect(session.body.error.code).toBe("archived");
  });

  it("held: records, drafts and boards were already refused", async () => {
    const engineer = await t.signIn("engineer");
    expect((await engineer.post(`/api/layouts/${SLUG}/rulebooks`).send({ rulebook: {} })).status).toBe(409);
    expect((await engineer.post(`/api/layouts/${SLUG}/nodes`).send({ id: "x", name: "x", detectors: [], signals: [] })).status).toBe(409);
  });

  it("an existing display link can still be revoked, and restoring makes it writable again", async () => {
    const admin = await t.signIn("admin");
    expect((await admin.delete(`/api/layouts/${SLUG}/display-links/${linkToken}`)).status).toBe(204);
    expect((await admin.post(`/api/layouts/${SLUG}/restore`)).status).toBe(200);
    const engineer = await t.signIn("engineer");
    expect((await engineer.put(`/api/layouts/${SLUG}/alarm-settings`).send({ stuckAfterMs: 5_000 })).status).toBe(200);
    expect((await admin.post(`/api/layouts/${SLUG}/display-links`).send({})).status).toBe(201);
  });
});
