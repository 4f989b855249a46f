/**
 * Attack pass, CSV exports opened in a spreadsheet: a signaller's reason, a member's own name
 * and a detector's name are typed by people and land at the start of a cell. A cell starting
 * with = + - @ is run as a formula by a spreadsheet (CWE-1236), so the exports guard it with
 * a leading `'`; the event log's import takes it off again, so the round trip is exact.
 */
import { QueryTypes } from "sequelize";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { DEMO_PASSWORD } from "../../server/db/seed/demo";
import { csvRecords } from "../../server/features/sessions/eventCsv";
import type { LayoutDetail } from "@shared/contract/rest";
import type { SessionImportResponse, SessionInputsResponse, SessionListResponse } from "@shared/contract/sessions";
import { SIDING_BOARD, SIDING_SLUG as SLUG, wrenfoldSidingLayout as sidingLayout } from "../fixtures/wrenfoldSiding";
import { connectBoard, startLiveHarness, waitFor, type Board, type LiveHarness } from "../support/live";
import { startTestApp, type TestApp } from "../support/testApp";

type Agent = Awaited<ReturnType<TestApp["signIn"]>>;

const FORMULA_NAME = '=HYPERLINK("http://fernmoor.example/x","open")';
const REASONS = ["=1+2", "+44 shunt", "-1 axle short", "@SUM(1)", "'=already quoted", "shunt in the siding"];
const DETECTOR_NAME = "=cmd|' /C calc'!A0";

/** The raw text of a download (supertest would parse CSV as nothing). */
async function download(agent: Agent, url: string): Promise<string> {
  const res = await agent.get(url).buffer(true).parse((r, done) => {
    let text = "";
    r.setEncoding("utf8");
    r.on("data", (chunk: string) => (text += chunk));
    r.on("end", () => done(null, text));
  });
  expect(res.status, url).toBe(200);
  return res.body as string;
}

/** Every cell as written in the file, unquoted but not unguarded: what a spreadsheet reads. */
function rawCells(csv: string): string[] {
  return csv
    .split("\r\n")
    .flatMap((line) => line.match(/("([^"]|"")*"|[^,]*)(,|$)/g) ?? [])
    .map((cell) => cell.replace(/,$/, ""))
    .map((cell) => (cell.startsWith('"') ? cell.slice(1, -1).replace(/""/g, '"') : cell))
    .filter((cell) => cell !== "");
}

describe("CSV exports never start a cell with a formula", () => {
  let t: TestApp;
  let h: LiveHarness;
  let board: Board;
  let maintainer: Agent;
  let sessionId = 0;

  beforeAll(async () => {
    t = await startTestApp();
    h = await startLiveHarness(t);
    const engineer = await t.signIn("engineer");
    expect((await engineer.post("/api/layouts/import").send(sidingLayout())).status).toBe(201);
    await waitFor(() => h.runtime.runner(SLUG) !== undefined, "the siding's runner");
    const layout = (await engineer.get(`/api/layouts/${SLUG}`)).body.layout as LayoutDetail;
    const { versions: _v, liveVersion: _l, archivedAt: _a, schematic, ...records } = layout;
    const renamed = { ...records, ...(schematic ? { schematic } : {}), format: "blocklight.layout/1", detectors: records.detectors.map((d, i) => (i === 0 ? { ...d, name: DETECTOR_NAME } : d)) };
    const saved = await engineer.put(`/api/layouts/${SLUG}`).send(renamed);
    expect(saved.status, JSON.stringify(saved.body)).toBe(200);

    const node = await engineer.post(`/api/layouts/${SLUG}/nodes`).send(SIDING_BOARD);
    board = await connectBoard(h.mqttUrl, SLUG, "siding-board", node.body.secret);
    const signaller = await t.signIn("signaller");
    // Anyone may choose their own name.
    expect((await signaller.patch("/api/me").send({ name: FORMULA_NAME, currentPassword: DEMO_PASSWORD })).status).toBe(200);
    await board.pulse("WS");
    for (const [i, reason] of REASONS.entries()) {
      const res = await signaller.post(`/api/layouts/${SLUG}/commands`).send({ type: i % 2 ? "release" : "hold", signal: "S1", reason });
      expect(res.status, JSON.stringify(res.body)).toBe(200);
    }
    const commands = async () => (await t.deps.db.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM events WHERE kind = 'command'`, { type: QueryTypes.SELECT }))[0].n;
    await waitFor(async () => (await commands()) === REASONS.length, "the commands stored");
    await h.runtime.idle();
    await h.runtime.session(SLUG, "close", { id: 1, name: "test" });
    maintainer = await t.signIn("maintainer");
    sessionId = ((await maintainer.get(`/api/layouts/${SLUG}/sessions`)).body as SessionListResponse).sessions[0].id;
  });
  afterAll(async () => {
    await board?.end();
    await h?.close();
    await t?.close();
  });

  it("the event log's CSV guards reasons and names, and imports back to exactly what was typed", async () => {
    const csv = await download(maintainer, `/api/sessions/${sessionId}/events?format=csv`);
    const cells = rawCells(csv);
    expect(cells.filter((c) => /^[=+\-@]/.test(c))).toEqual([]);
    expect(cells).toContain(`'${FORMULA_NAME}`);
    expect(cells).toContain("'-1 axle short");
    expect(cells).toContain("''=already quoted");

    // Read back by the import's own reader, and by the import: the reasons and the name as typed.
    const [header, ...rows] = [...csvRecords(csv)].map((r) => r.cells);
    const at = (column: string) => rows.filter((r) => r[header.indexOf("kind")] === "command").map((r) => r[header.indexOf(column)]);
    expect(at("commandReason")).toEqual(REASONS);
    expect(new Set(at("by"))).toEqual(new Set([FORMULA_NAME]));
    const res = await maintainer.post(`/api/layouts/${SLUG}/sessions/import`).attach("file", Buffer.from(csv), "day.csv");
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const inputs = async (id: number) => ((await maintainer.get(`/api/sessions/${id}/inputs`)).body as SessionInputsResponse).inputs;
    const imported = await inputs((res.body as SessionImportResponse).sessionId);
    expect(imported).toEqual(await inputs(sessionId));
    expect(imported.filter((i) => i.type === "command").map((i) => (i as { reason?: string }).reason)).toEqual(REASONS);
  });

  it("the running-day report's CSV guards a detector's name", async () => {
    const csv = await download(maintainer, `/api/sessions/${sessionId}/report?format=csv&table=detectors`);
    const cells = rawCells(csv);
    expect(cells).toContain(`'${DETECTOR_NAME}`);
    expect(cells.filter((c) => /^[=+\-@]/.test(c))).toEqual([]);
  });
});
