/**
 * Attack pass, hostile input: values zod lets through but PostgreSQL or a recursive check
 * cannot take (a NUL character, nesting thousands deep, an event id past bigint) must come
 * back as a 400 with the path of the value, and change nothing — never a 500.
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { DEMO_PASSWORD } from "../../server/db/seed/demo";
import { startTestApp, type TestApp } from "../support/testApp";

const SLUG = "kestrel-bank";
const T0 = Date.parse("2026-05-02T09:00:00.000Z");

/** `[[[…1…]]]` nested `depth` deep, as raw JSON text (the client library cannot stringify it). */
const nestedText = (depth: number) => "[".repeat(depth) + "1" + "]".repeat(depth);

const paths = (res: request.Response) => (res.body.error?.details ?? []).map((d: { path: string }) => d.path);

describe("hostile JSON bodies", () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp();
  });
  afterAll(async () => {
    await t.close();
  });

  it.each([
    ["PATCH /api/me", "patch", "/api/me", { name: "Ada\u0000Fernmoor", currentPassword: DEMO_PASSWORD }, "$.name"],
    ["POST /api/layouts", "post", "/api/layouts", { slug: "nul-test", name: "Nul\u0000Loop", scale: { name: "G", ratio: 22.5 } }, "$.name"],
    ["POST …/display-links", "post", `/api/layouts/${SLUG}/display-links`, { label: "hall\u0000screen" }, "$.label"],
    ["POST /api/simulate", "post", "/api/simulate", { layout: kestrelBankLayout(), events: [{ type: "hold", signal: "M1", at: 0, reason: "a\u0000b" }] }, "$.events[0].reason"],
  ])("%s: a NUL character in a string is a 400 naming its path", async (_name, method, url, body, path) => {
    const admin = await t.signIn("admin");
    const res = await (method === "patch" ? admin.patch(url) : admin.post(url)).send(body);
    expect(res.status, JSON.stringify(res.body)).toBe(400);
    expect(paths(res)).toContain(path);
  });

  it("a NUL character in a key is a 400 too", async () => {
    const admin = await t.signIn("admin");
    const res = await admin.post("/api/layouts").set("Content-Type", "application/json").send('{"slug":"nul-key","name":"x","scale":{"name":"G","ratio":22.5},"a\\u0000b":1}');
    expect(res.status).toBe(400);
    expect(paths(res)).toContain("$");
    expect((await admin.get("/api/layouts/nul-key")).status).toBe(404);
  });

  it("a schematic nested 20,000 deep is a 400 with its path, and the layout is unchanged", async () => {
    const engineer = await t.signIn("engineer");
    const { layout } = (await engineer.get(`/api/layouts/${SLUG}`)).body;
    const { versions: _v, liveVersion: _l, archivedAt: _a, revision, ...records } = layout;
    const text = JSON.stringify({ format: "blocklight.layout/1", ...records, schematic: { deep: "@" }, revision }).replace('"@"', nestedText(20_000));
    const res = await engineer.put(`/api/layouts/${SLUG}`).set("Content-Type", "application/json").send(text);
    expect(res.status, JSON.stringify(res.body).slice(0, 300)).toBe(400);
    expect(paths(res)[0]).toMatch(/^\$\.schematic\.deep(\[0\])+$/);
    expect((await engineer.get(`/api/layouts/${SLUG}`)).body.layout.revision).toBe(revision);
  });

  it("a rulebook condition nested 20,000 deep in POST /api/prove is a 400, not a crash", async () => {
    const viewer = await t.signIn("viewer");
    const file = kestrelBankLayout();
    const text = JSON.stringify({ ...file, rulebook: { ...file.rulebook, rules: [{ ...file.rulebook.rules[0], when: "@" }] } }).replace(
      '"@"',
      '{"not":'.repeat(20_000) + '{"latch":"x"}' + "}".repeat(20_000),
    );
    const res = await viewer.post("/api/prove").set("Content-Type", "application/json").send(text);
    expect(res.status, JSON.stringify(res.body).slice(0, 300)).toBe(400);
    expect(paths(res)[0]).toMatch(/^\$\.rulebook\.rules\[0\]\.when(\.not)+$/);
  });

  it("nesting a little below the limit is still read as usual", async () => {
    const viewer = await t.signIn("viewer");
    const res = await viewer.post("/api/simulate").set("Content-Type", "application/json").send(`{"layout":${JSON.stringify(kestrelBankLayout())},"events":${nestedText(40)}}`);
    expect(res.status).toBe(400);
    expect(paths(res)).toContain("$.events[0]"); // zod's own complaint: the guard let it through
  });
});

describe("hostile event logs and query strings", () => {
  let t: TestApp;
  let sessionId = 0;
  beforeAll(async () => {
    t = await startTestApp();
    const maintainer = await t.signIn("maintainer");
    const line = { kind: "pulse", status: "accepted", node: "bank-foot", boot: "b1", seq: 1, detector: "MA", receivedAt: new Date(T0).toISOString() };
    const res = await maintainer.post(`/api/layouts/${SLUG}/sessions/import`).attach("file", Buffer.from(JSON.stringify(line) + "\n"), "day.jsonl");
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    sessionId = res.body.sessionId;
  });
  afterAll(async () => {
    await t.close();
  });

  it("an imported line whose reason holds a NUL character is a 400 naming the line, and nothing is imported", async () => {
    const maintainer = await t.signIn("maintainer");
    const line = {
      kind: "command",
      status: "accepted",
      receivedAt: new Date(T0).toISOString(),
      input: { type: "command", at: T0, command: "zero", counter: "junction", by: "Test signaller", reason: "stray\u0000pulse" },
    };
    const before = (await maintainer.get(`/api/layouts/${SLUG}/sessions`)).body.sessions.length;
    const res = await maintainer.post(`/api/layouts/${SLUG}/sessions/import`).attach("file", Buffer.from(JSON.stringify(line) + "\n"), "nul.jsonl");
    expect(res.status, JSON.stringify(res.body)).toBe(400);
    expect(paths(res)).toContain("line 1: input.reason");
    expect((await maintainer.get(`/api/layouts/${SLUG}/sessions`)).body.sessions.length).toBe(before);
  });

  it.each(["9999999999999999999", "9223372036854775808"])("an `after` event id of %s (past bigint) is a 400 on $.after", async (after) => {
    const viewer = await t.signIn("viewer");
    const res = await viewer.get(`/api/sessions/${sessionId}/events?format=json&after=${after}`);
    expect(res.status, JSON.stringify(res.body)).toBe(400);
    expect(paths(res)).toContain("$.after");
  });

  it("the largest bigint is still a valid `after` (an empty page)", async () => {
    const viewer = await t.signIn("viewer");
    const res = await viewer.get(`/api/sessions/${sessionId}/events?format=json&after=9223372036854775807`);
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ events: [], total: 1, next: null });
  });
});
