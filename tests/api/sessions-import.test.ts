/**
 * Importing an exported event log: the JSONL and CSV exports of a session made by the real
 * live runtime come back as new imported sessions whose replay inputs equal the original's;
 * a broken file is refused whole, line by line; imported events never touch the live state.
 */
import request from "supertest";
import { QueryTypes } from "sequelize";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { SessionImportResponse, SessionInputsResponse, SessionListResponse } from "@shared/contract/sessions";
import { MAX_IMPORT_BYTES } from "../../server/features/sessions/import";
import { connectBoard, startLiveHarness, waitFor, type Board, type LiveHarness } from "../support/live";
import { startTestApp, type TestApp } from "../support/testApp";

const SLUG = "kestrel-bank";
const IMPORT = `/api/layouts/${SLUG}/sessions/import`;

describe("sessions: importing an exported event log", () => {
  let t: TestApp;
  let h: LiveHarness;
  let maintainer: Awaited<ReturnType<TestApp["signIn"]>>;
  let board: Board;
  let junction: Board;
  let original = 0;

  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
    t.deps.db.sequelize.query<T>(sql, { type: QueryTypes.SELECT, replacements });
  const counts = async () => (await q<{ sessions: number; events: number }>(`SELECT (SELECT count(*)::int FROM sessions) AS sessions, (SELECT count(*)::int FROM events) AS events`))[0];
  const settled = async (n: number) => {
    await waitFor(async () => (await counts()).events >= n, `${n} stored events`);
    await h.runtime.idle();
  };
  const upload = (fileName: string, content: string | Buffer, fields: Record<string, string> = {}) => {
    let req = maintainer.post(IMPORT);
    for (const [name, value] of Object.entries(fields)) req = req.field(name, value);
    return req.attach("file", Buffer.isBuffer(content) ? content : Buffer.from(content), fileName);
  };
  const exported = async (id: number, format: "jsonl" | "csv") => {
    const res = await maintainer.get(`/api/sessions/${id}/events?format=${format}`).buffer(true).parse((r, done) => {
      let text = "";
      r.setEncoding("utf8");
      r.on("data", (chunk: string) => (text += chunk));
      r.on("end", () => done(null, text));
    });
    expect(res.status).toBe(200);
    return res.body as string;
  };
  const inputs = async (id: number) => (await maintainer.get(`/api/sessions/${id}/inputs`)).body as SessionInputsResponse;

  beforeAll(async () => {
    t = await startTestApp();
    h = await startLiveHarness(t);
    const engineer = await t.signIn("engineer");
    const boards: Board[] = [];
    for (const [id, detectors, signals] of [
      ["bank-foot", ["MA"], []],
      ["junction", ["ME", "JX"], ["M1"]],
    ] as const) {
      const res = await engineer.post(`/api/layouts/${SLUG}/nodes`).send({ id, name: id, detectors, signals });
      expect(res.status, JSON.stringify(res.body)).toBe(201);
      boards.push(await connectBoard(h.mqttUrl, SLUG, id, res.body.secret));
    }
    [board, junction] = boards;
    const signaller = await t.signIn("signaller");
    let stored = (await counts()).events;

    // A main-line train over the junction at Kestrel Bank, a redelivered pulse, a refused one, a hold and release.
    await board.pulse("MA");
    await board.pulse("MA");
    await settled((stored += 2));
    await board.publish(`blocklight/v1/${SLUG}/node/bank-foot/pulse`, JSON.stringify({ detector: "MA", seq: board.seq, boot: board.boot }));
    await board.publish(`blocklight/v1/${SLUG}/node/bank-foot/pulse`, JSON.stringify({ detector: "JX", seq: board.seq + 1, boot: board.boot }));
    board.seq += 1; // the refused pulse took its seq in the boot's order (CONTRACT.md §2): the board counts on from it
    await settled((stored += 2));
    expect((await signaller.post(`/api/layouts/${SLUG}/commands`).send({ type: "hold", signal: "M1", reason: "shunt, \"quarry\" siding" })).status).toBe(200);
    expect((await signaller.post(`/api/layouts/${SLUG}/commands`).send({ type: "release", signal: "M1", reason: "shunt finished" })).status).toBe(200);
    for (const detector of ["ME", "ME", "JX", "JX"]) await junction.pulse(detector);
    await settled((stored += 6));
    await h.runtime.session(SLUG, "close", { id: 1, name: "test" });

    maintainer = await t.signIn("maintainer");
    const list = (await maintainer.get(`/api/layouts/${SLUG}/sessions`)).body as SessionListResponse;
    original = list.sessions[0].id;
  });
  afterAll(async () => {
    await board?.end();
    await junction?.end();
    await h?.close();
    await t?.close();
  });

  it.each(["jsonl", "csv"] as const)("a %s export imports as a new session with the original's replay inputs", async (format) => {
    const file = await exported(original, format);
    const before = await inputs(original);
    const res = await upload(`kestrel-day.${format}`, file);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const created = res.body as SessionImportResponse;
    expect(created.sessionId).not.toBe(original);
    expect(created.events).toBe(file.trim().split("\n").length - (format === "csv" ? 1 : 0));

    const after = await inputs(created.sessionId);
    expect(after.rulebookVersion).toBe(before.rulebookVersion);
    expect(after.inputs).toEqual(before.inputs);
    expect(after.inputs.length).toBeGreaterThanOrEqual(8);
    expect(after.rulebookSwitches).toEqual([]);

    // Same rows in the log, status, reasons and seqs included (not the changes: the replay recomputes those).
    const strip = (text: string) =>
      text
        .trim()
        .split("\n")
        .map((line) => {
          const { id: _id, user: _user, changes: _changes, ...rest } = JSON.parse(line);
          return rest;
        });
    expect(strip(await exported(created.sessionId, "jsonl"))).toEqual(strip(await exported(original, "jsonl")));

    const listed = ((await maintainer.get(`/api/layouts/${SLUG}/sessions`)).body as SessionListResponse).sessions.find((s) => s.id === created.sessionId)!;
    expect(listed.importedFrom).toBe(`kestrel-day.${format}`);
    const lastLine = JSON.parse((await exported(original, "jsonl")).trim().split("\n").at(-1)!);
    expect(listed.closedAt).toBe(lastLine.receivedAt);
  });

  it("takes the rulebook version from the form and refuses one the layout does not have", async () => {
    const file = await exported(original, "jsonl");
    const res = await upload("kestrel-day.jsonl", file, { rulebookVersion: "1" });
    expect(res.status).toBe(201);
    const missing = await upload("kestrel-day.jsonl", file, { rulebookVersion: "99" });
    expect(missing.status).toBe(400);
  });

  it("refuses a file with broken lines, listing every one, and stores nothing", async () => {
    const lines = (await exported(original, "jsonl")).trim().split("\n");
    const good = JSON.parse(lines[0]);
    const broken = [
      lines[0],
      "{not json",
      JSON.stringify({ ...good, kind: "wheel" }),
      JSON.stringify({ ...good, kind: "pulse", status: "accepted", detector: null }),
      lines[1],
      JSON.stringify({ ...good, receivedAt: "yesterday", seq: -4 }),
    ].join("\n");
    const before = await counts();
    const res = await upload("broken.jsonl", broken);
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("invalid_event_log");
    const paths = (res.body.error.details as { path: string }[]).map((d) => d.path);
    expect(paths).toEqual(expect.arrayContaining(["line 2", "line 3: kind", "line 4: detector", "line 6: receivedAt", "line 6: seq"]));
    expect(paths.some((p) => p.startsWith("line 1") || p.startsWith("line 5"))).toBe(false);
    expect(await counts()).toEqual(before);
  });

  it("refuses a CSV with broken rows by line, a quoted cell spanning lines counted", async () => {
    const csv = (await exported(original, "csv")).trimEnd().split("\r\n");
    const columns = csv[0].split(",");
    const cell = (column: string, value: string) => columns.map((c) => (c === column ? value : "")).join(",");
    const file = [csv[0], csv[1], cell("reason", '"two\nlines"'), csv[2], "a,b"].join("\r\n");
    const res = await upload("broken.csv", file);
    expect(res.status).toBe(400);
    const paths = (res.body.error.details as { path: string }[]).map((d) => d.path);
    // Row 3 starts on line 3 and runs onto line 4; the short row is on line 6.
    expect(paths).toEqual(expect.arrayContaining(["line 3: kind", "line 3: status", "line 3: receivedAt", "line 6"]));
  });

  it("lists at most 200 errors and counts the rest", async () => {
    const res = await upload("junk.jsonl", Array.from({ length: 250 }, () => "{").join("\n"));
    expect(res.status).toBe(400);
    const details = res.body.error.details as { path: string; message: string }[];
    expect(details).toHaveLength(201);
    expect(details.at(-1)!.message).toBe("and 50 more error(s)");
  });

  it("answers 413 for a file over the limit, and 400 without a file", async () => {
    const before = await counts();
    const res = await upload("huge.jsonl", Buffer.alloc(MAX_IMPORT_BYTES + 1, "x"));
    expect(res.status).toBe(413);
    expect(res.body.error.code).toBeTruthy();
    expect((await maintainer.post(IMPORT).send({})).status).toBe(400);
    expect(await counts()).toEqual(before);
  });

  it("leaves the live runner alone: a restart recovers the same state and the board's next pulse is accepted", async () => {
    const live = async () => (await maintainer.get(`/api/layouts/${SLUG}/live`)).body;
    // Half a train: two axles on the approach, never cleared. Replayed into the live state it would show.
    const approach = (await exported(original, "jsonl")).split("\n").slice(0, 2).join("\n");
    expect((await upload("approach.jsonl", approach)).status).toBe(201);
    const before = await live();
    await h.runtime.stop();
    await h.startRuntime();
    const after = await live();
    expect(after.shown).toEqual(before.shown);
    expect(after.counters).toEqual(before.counters);
    const stored = (await counts()).events;
    await board.pulse("MA");
    await settled(stored + 1);
    const [last] = await q<{ status: string; imported: boolean }>(`SELECT status, imported FROM events ORDER BY id DESC LIMIT 1`);
    expect(last).toEqual({ status: "accepted", imported: false });
  });

  it("is for maintainers and admins", async () => {
    expect((await request(t.app).post(IMPORT)).status).toBe(401);
    const viewer = await t.signIn("viewer");
    expect((await viewer.post(IMPORT).attach("file", Buffer.from("{}"), "x.jsonl")).status).toBe(403);
  });
});
