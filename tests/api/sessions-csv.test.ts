/**
 * The event log's CSV: one plain value per cell (no JSON), read back by the import into the
 * same engine inputs, for a day of real MQTT pulses, a quiet trigger's tick, board status and
 * lamp-proving reports and signaller commands; and a CSV of the earlier export, with JSON in
 * its `input` and `changes` cells, still imports.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import type { SessionImportResponse, SessionInputsResponse, SessionListResponse } from "@shared/contract/sessions";
import { csvRecords } from "../../server/features/sessions/eventCsv";
import { SIDING_BOARD, SIDING_QUIET_MS, SIDING_SLUG as SLUG, wrenfoldSidingLayout as sidingLayout } from "../fixtures/wrenfoldSiding";
import { connectBoard, onManualClock, startLiveHarness, waitFor, type Board, type LiveHarness } from "../support/live";
import { ManualClock } from "../support/manualClock";
import { startTestApp, type TestApp } from "../support/testApp";

const IMPORT = `/api/layouts/${SLUG}/sessions/import`;

type Agent = Awaited<ReturnType<TestApp["signIn"]>>;

/** The CSV as rows of named cells. */
function csvTable(text: string): Record<string, string>[] {
  const [header, ...rows] = [...csvRecords(text)].map((r) => r.cells);
  return rows.map((cells) => Object.fromEntries(header.map((column, i) => [column, cells[i]])));
}

describe("sessions: the event log's flat CSV, exported and imported", () => {
  let t: TestApp;
  let h: LiveHarness;
  let maintainer: Agent;
  let board: Board;
  let original = 0;
  let shownRev = 0;

  const count = async () =>
    (await t.deps.db.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM events`, { type: QueryTypes.SELECT }))[0].n;
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
  const upload = (fileName: string, content: string) => maintainer.post(IMPORT).attach("file", Buffer.from(content), fileName);
  const inputs = async (id: number) => (await maintainer.get(`/api/sessions/${id}/inputs`)).body as SessionInputsResponse;
  const jsonl = async (id: number) =>
    (await exported(id, "jsonl"))
      .trim()
      .split("\n")
      .map((line) => {
        const { id: _id, user: _user, ...rest } = JSON.parse(line);
        return rest;
      });

  beforeAll(async () => {
    t = await startTestApp();
    // The server clock moves by hand: the quiet trigger fires when the test says, between the pulses never.
    const clock = new ManualClock();
    h = await startLiveHarness(t, onManualClock(clock));
    const engineer = await t.signIn("engineer");
    expect((await engineer.post("/api/layouts/import").send(sidingLayout())).status).toBe(201);
    await waitFor(() => h.runtime.runner(SLUG) !== undefined, "the siding's runner");
    const node = await engineer.post(`/api/layouts/${SLUG}/nodes`).send(SIDING_BOARD);
    board = await connectBoard(h.mqttUrl, SLUG, "siding-board", node.body.secret);
    const signaller = await t.signIn("signaller");
    const command = async (body: object) => expect((await signaller.post(`/api/layouts/${SLUG}/commands`).send(body)).status).toBe(200);

    // Two axles clear S1; the quiet trigger puts it back (a tick); the board reports itself and S1.
    await board.pulse("WS");
    await board.pulse("WS");
    await waitFor(() => board.aspects.get("S1")?.aspect === "clear", "S1 clear");
    const pulses = async () =>
      (await t.deps.db.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM events WHERE kind = 'pulse' AND boot = :boot`, { type: QueryTypes.SELECT, replacements: { boot: board.boot } }))[0].n;
    await waitFor(async () => (await pulses()) === 2, "both pulses stored");
    await clock.advance(SIDING_QUIET_MS + 50, () => h.runtime.idle());
    await waitFor(() => board.aspects.get("S1")?.aspect === "danger", "S1 back at danger after the quiet time");
    shownRev = board.aspects.get("S1")!.rev;
    await board.publish(`blocklight/v1/${SLUG}/node/siding-board/status`, JSON.stringify({ online: true, boot: board.boot, fw: "1.4.0" }));
    await board.publish(`blocklight/v1/${SLUG}/node/siding-board/shown`, JSON.stringify({ signal: "S1", aspect: "danger", rev: shownRev }));
    await command({ type: "hold", signal: "S1", reason: 'shunt, "quarry" siding\nsecond line' });
    await command({ type: "set", latch: "shunting", reason: "shunt in the siding" });
    await command({ type: "release", signal: "S1", reason: "shunt finished" });
    await board.pulse("WS");
    await command({ type: "zero", counter: "axles", reason: "stray pulse" });
    await command({ type: "restart", reason: "clean start" });
    await waitFor(async () => (await count()) >= 11, "the day's events stored");
    await h.runtime.idle();
    await h.runtime.session(SLUG, "close", { id: 1, name: "test" });

    maintainer = await t.signIn("maintainer");
    const list = (await maintainer.get(`/api/layouts/${SLUG}/sessions`)).body as SessionListResponse;
    original = list.sessions[0].id;
  });
  afterAll(async () => {
    await board?.end();
    await h?.close();
    await t?.close();
  });

  it("has one plain value per cell: what each kind carries in columns of its own", async () => {
    const csv = await exported(original, "csv");
    expect(csv.split("\r\n")[0]).toBe(
      "id,receivedAt,kind,status,reason,node,boot,seq,detector,boardT,signal,aspect,rev,online,fw,command,latch,counter,by,commandReason,topic,user,changes",
    );
    const rows = csvTable(csv);
    for (const row of rows) for (const cell of Object.values(row)) expect(cell).not.toMatch(/^[[{]/);

    const pulses = rows.filter((r) => r.kind === "pulse");
    expect(pulses.map((p) => [p.detector, p.seq, p.boot, p.node])).toEqual([1, 2, 3].map((seq) => ["WS", String(seq), board.boot, "siding-board"]));
    expect(pulses[0].changes).toContain("counter axles: 0 -> 1 (rule approach)");
    expect(pulses[0].changes).toContain("shown S1: danger -> clear (rule approach)");
    const tick = rows.find((r) => r.kind === "tick")!;
    expect(tick.changes).toContain("shown S1: clear -> danger (rule gone-quiet)");

    const status = rows.find((r) => r.kind === "status" && r.fw === "1.4.0")!;
    expect([status.online, status.boot]).toEqual(["true", board.boot]);
    const shown = rows.find((r) => r.kind === "shown")!;
    expect([shown.signal, shown.aspect, shown.rev]).toEqual(["S1", "danger", String(shownRev)]);

    const commands = rows.filter((r) => r.kind === "command").map((r) => [r.command, r.signal, r.latch, r.counter, r.by, r.commandReason]);
    expect(commands).toEqual([
      ["hold", "S1", "", "", "Fernmoor Signaller", 'shunt, "quarry" siding\nsecond line'],
      ["set", "", "shunting", "", "Fernmoor Signaller", "shunt in the siding"],
      ["release", "S1", "", "", "Fernmoor Signaller", "shunt finished"],
      ["zero", "", "", "axles", "Fernmoor Signaller", "stray pulse"],
      ["restart", "", "", "", "Fernmoor Signaller", "clean start"],
    ]);
  });

  it("imports back into the same engine inputs and the same rows", async () => {
    const csv = await exported(original, "csv");
    const res = await upload("siding-day.csv", csv);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const created = res.body as SessionImportResponse;
    expect(created.events).toBe(csvTable(csv).length);

    const [before, after] = [await inputs(original), await inputs(created.sessionId)];
    expect(after.inputs).toEqual(before.inputs);
    expect(after.inputs.map((i) => i.type)).toEqual(expect.arrayContaining(["pulse", "tick", "command"]));
    // The same rows, and the same changes: the import's are the engine's replay of its inputs.
    const rows = await jsonl(created.sessionId);
    expect(rows).toEqual(await jsonl(original));
    expect(rows.filter((r) => r.changes.length > 0).map((r) => r.kind)).toEqual(expect.arrayContaining(["pulse", "tick", "command"]));
  });

  it("shows an imported session's changes, replayed, on the event log page and in the CSV", async () => {
    const created = (await upload("siding-again.csv", await exported(original, "csv"))).body as SessionImportResponse;
    const page = await maintainer.get(`/api/sessions/${created.sessionId}/events?format=json&kind=tick`);
    expect(page.status).toBe(200);
    expect(page.body.events[0].changes).toEqual(
      expect.arrayContaining([
        { kind: "counter", name: "axles", from: 2, to: 0, rule: "gone-quiet" },
        { kind: "shown", name: "S1", from: "clear", to: "danger", rule: "gone-quiet" },
      ]),
    );
    const hold = csvTable(await exported(created.sessionId, "csv")).find((r) => r.command === "hold")!;
    expect(hold.changes).toContain("held S1");
  });

  it("replays a session imported before replays were stored, once, when its log is first read", async () => {
    const created = (await upload("siding-older.csv", await exported(original, "csv"))).body as SessionImportResponse;
    const changed = () =>
      t.deps.db.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM changes c JOIN events e ON e.id = c.event_id WHERE e.session_id = :id`, {
        type: QueryTypes.SELECT,
        replacements: { id: created.sessionId },
      });
    const [{ n: replayed }] = await changed();
    expect(replayed).toBeGreaterThan(0);
    // As an import made before this release left it: inputs only, not marked replayed.
    await t.deps.db.sequelize.query(`DELETE FROM changes c USING events e WHERE e.id = c.event_id AND e.session_id = :id`, { replacements: { id: created.sessionId } });
    await t.deps.db.sequelize.query(`UPDATE sessions SET changes_replayed_at = NULL WHERE id = :id`, { replacements: { id: created.sessionId } });
    expect((await changed())[0].n).toBe(0);
    const [first, second] = await Promise.all([
      maintainer.get(`/api/sessions/${created.sessionId}/events?format=json`),
      maintainer.get(`/api/sessions/${created.sessionId}/events?format=json`),
    ]);
    expect([first.status, second.status]).toEqual([200, 200]);
    expect((await changed())[0].n).toBe(replayed);
    expect(first.body.events.some((e: { changes: unknown[] }) => e.changes.length > 0)).toBe(true);
  });

  it("still imports a CSV of the earlier export, with JSON in its input and changes cells", async () => {
    const boot = "a1b2c3";
    const cell = (value: unknown) => `"${JSON.stringify(value).replace(/"/g, '""')}"`;
    const old = [
      "id,receivedAt,kind,status,reason,node,boot,seq,detector,boardT,topic,user,input,changes",
      `7,2026-05-02T10:15:03.120Z,status,accepted,,siding-board,${boot},,,,blocklight/v1/${SLUG}/node/siding-board/status,,${cell({ online: true, boot, fw: "1.3.9" })},[]`,
      `8,2026-05-02T10:15:04.000Z,pulse,accepted,,siding-board,${boot},1,WS,5120,blocklight/v1/${SLUG}/node/siding-board/pulse,,,${cell([{ kind: "counter", name: "axles", from: 0, to: 1, rule: "approach" }])}`,
      `9,2026-05-02T10:15:04.300Z,tick,accepted,,,,,,,,,${cell({ type: "tick", at: Date.parse("2026-05-02T10:15:04.300Z") })},[]`,
      `10,2026-05-02T10:15:09.500Z,command,accepted,,,,,,,,Fernmoor Signaller,${cell({ type: "command", at: Date.parse("2026-05-02T10:15:09.500Z"), command: "hold", signal: "S1", by: "Fernmoor Signaller", reason: "shunt, quarry" })},[]`,
    ].join("\r\n");
    const res = await upload("siding-before.csv", old);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const replay = await inputs((res.body as SessionImportResponse).sessionId);
    expect(replay.inputs).toEqual([
      { type: "pulse", detector: "WS", at: Date.parse("2026-05-02T10:15:04.000Z") },
      { type: "tick", at: Date.parse("2026-05-02T10:15:04.300Z") },
      { type: "command", at: Date.parse("2026-05-02T10:15:09.500Z"), command: "hold", signal: "S1", by: "Fernmoor Signaller", reason: "shunt, quarry" },
    ]);
    const rows = await jsonl((res.body as SessionImportResponse).sessionId);
    expect(rows[0]).toMatchObject({ kind: "status", boot, input: { online: true, boot, fw: "1.3.9" } });
    expect(rows[1]).toMatchObject({ kind: "pulse", seq: 1, boardT: 5120 });
    // The file's changes cell is not trusted: the replay's are stored.
    expect(rows[1].changes).toEqual([
      { kind: "counter", name: "axles", from: 0, to: 1, rule: "approach" },
      { kind: "wanted", name: "S1", from: "danger", to: "clear", rule: "approach" },
      { kind: "shown", name: "S1", from: "danger", to: "clear", rule: "approach" },
      { kind: "quiet", name: "gone-quiet", from: null, to: Date.parse("2026-05-02T10:15:04.300Z"), rule: "gone-quiet" },
    ]);
  });

  it("refuses a flat CSV with bad cells, naming line and column, and stores nothing", async () => {
    const header = (await exported(original, "csv")).split("\r\n")[0];
    const columns = header.split(",");
    const row = (cells: Record<string, string>) => columns.map((c) => cells[c] ?? "").join(",");
    const at = "2026-05-02T10:15:03.120Z";
    const file = [
      header,
      row({ receivedAt: at, kind: "command", status: "accepted", command: "jump" }),
      row({ receivedAt: at, kind: "command", status: "accepted", command: "hold" }),
      row({ receivedAt: at, kind: "status", status: "accepted", node: "siding-board", online: "maybe" }),
      row({ receivedAt: at, kind: "pulse", status: "accepted", detector: "WS", seq: "first" }),
      row({ receivedAt: at, kind: "command", status: "accepted" }),
    ].join("\r\n");
    const before = await count();
    const res = await upload("bad.csv", file);
    expect(res.status).toBe(400);
    const paths = (res.body.error.details as { path: string }[]).map((d) => d.path);
    expect(paths).toEqual(expect.arrayContaining(["line 2: command", "line 3: signal", "line 4: online", "line 5: seq", "line 6: command"]));
    expect(await count()).toBe(before);

    const wrongHeader = await upload("bad-header.csv", "receivedAt,kind,status,colour\r\n");
    expect(wrongHeader.status).toBe(400);
    expect(wrongHeader.body.error.details[0]).toMatchObject({ path: "line 1: header" });
    expect(wrongHeader.body.error.details[0].message).toContain("unknown colour");
  });
});
