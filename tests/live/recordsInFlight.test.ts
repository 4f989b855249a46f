/**
 * Board messages that arrive while saved records are still being reloaded (real broker,
 * PostgreSQL, server runner and reference boards on the Kestrel Bank demo). The reload is
 * caught in flight by holding back the runtime's read of the boards (tests/support/queryGate.ts):
 * a pulse from the board a detector was just moved to, a points report from the board points
 * were just moved to, and the first messages of a board just registered are applied, once and
 * in seq order, once the new records are adopted; a detector that no board serves is still
 * rejected with its reason, after the reload or after `RECORDS_WAIT_MS` on the runner's clock;
 * and other boards' traffic is stored meanwhile, not held up.
 */
import { QueryTypes } from "sequelize";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { poolFromDeps } from "../../server/runtime/liveRuntime";
import { RECORDS_WAIT_MS } from "../../server/runtime/recordsHold";
import type { LayoutRunner } from "../../server/runtime/runner";
import { connectBoard, issueBoardSecrets, KESTREL_BOARDS, onManualClock, startLiveHarness, waitFor, type Board, type LiveHarness } from "../support/live";
import { ManualClock } from "../support/manualClock";
import { gateQueries, type QueryGate } from "../support/queryGate";
import { layoutRecords, type LayoutRecords } from "../support/layoutRecords";
import { startTestApp, type TestApp } from "../support/testApp";

const SLUG = "kestrel-bank";
type Agent = Awaited<ReturnType<TestApp["signIn"]>>;
type Records = LayoutRecords;
type Row = { seq: string | null; status: string; reason: string | null; detector: string | null; kind: string };

describe("board messages while saved records are being reloaded", () => {
  let t: TestApp;
  let h: LiveHarness;
  let gate: QueryGate;
  let pool: ReturnType<typeof poolFromDeps>;
  let engineer: Agent;
  const clock = new ManualClock();
  const boards: Board[] = [];
  let bankFoot: Board;
  let shed: Board;

  const runner = (): LayoutRunner => h.runtime.runner(SLUG)!;
  const counters = () => ({ ...runner().engineState().counters });
  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => t.deps.db.sequelize.query<T>(sql, { type: QueryTypes.SELECT, replacements });
  /** What is stored for one boot of a board, in the order the runner stored it. */
  const rows = (node: string, boot: string) =>
    q<Row>(`SELECT seq, status, reason, detector, kind FROM events WHERE node_id = :node AND boot = :boot AND kind <> 'status' ORDER BY id`, { node, boot });
  const { save } = layoutRecords(() => engineer, SLUG);
  const node = (r: Records, id: string) => r.nodes.find((n) => n.id === id)!;
  const move = (r: Records, what: "detectors" | "points", id: string, from: string, to: string) => {
    const source = node(r, from);
    source[what] = (source[what] ?? []).filter((x) => x !== id);
    const target = node(r, to);
    target[what] = [...(target[what] ?? []), id];
  };
  /** Saves with the runtime's read of the boards held back: the reload is in flight when this returns. */
  const saveWhileReloadHangs = async (change: (r: Records) => void) => {
    gate.close();
    await save(change);
    await waitFor(() => gate.held >= 1, "the reload of the records to be in flight");
  };
  const seqs = (stored: Row[]) => stored.map((r) => Number(r.seq));
  /** Until the runner has `n` more of a board's messages: held (not yet acknowledged), or stored. */
  const received = async (n: number, stored: () => Promise<unknown[]>, storedBefore: number) =>
    waitFor(async () => h.runtime.pendingAcks() >= n || (await stored()).length >= storedBefore + n, `${n} more messages received by the runner`);

  beforeAll(async () => {
    t = await startTestApp();
    pool = poolFromDeps(t.deps);
    // The runtime reads a layout's boards with this query (server/runtime/recovery.ts, loadNodes).
    gate = gateQueries(pool, (sql) => /\bFROM nodes\b/.test(sql));
    h = await startLiveHarness(t, onManualClock(clock), { pool });
    engineer = await t.signIn("engineer");
    const secrets = await issueBoardSecrets(t, SLUG, Object.values(KESTREL_BOARDS));
    bankFoot = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!, { boot: "flight-bf" });
    shed = await connectBoard(h.mqttUrl, SLUG, "shed", secrets.get("shed")!, { boot: "flight-sh" });
    boards.push(bankFoot, shed);
    await waitFor(() => runner().nodeDirectory().has("shed") && runner().nodeDirectory().has("bank-foot"), "the registered boards in the runner's directory");
  });
  // A failed test must not leave the next one with a hanging reload.
  afterEach(() => gate.open());
  afterAll(async () => {
    gate?.open();
    for (const board of boards) await board.end();
    await h?.close();
    await pool?.end();
    await t?.close();
  });

  it("a pulse from the board a detector was just moved to, before the reload is adopted, is applied once and in order", async () => {
    await shed.pulse("SA");
    await waitFor(async () => (await rows("shed", "flight-sh")).length === 1, "shed's first pulse stored");
    const before = counters();

    await saveWhileReloadHangs((r) => move(r, "detectors", "BA", "quarry", "shed"));
    await shed.pulse("BA"); // seq 2: served by the shed only as saved
    await shed.pulse("SA"); // seq 3: behind it
    await received(2, () => rows("shed", "flight-sh"), 1);
    await h.runtime.idle();
    expect(seqs(await rows("shed", "flight-sh")), "nothing judged against the old boards while the reload is in flight").toEqual([1]);
    expect(runner().held().messages).toBe(2);

    gate.open();
    await shed.board.whenCovered();
    await h.runtime.idle();
    const stored = await rows("shed", "flight-sh");
    expect(stored.map((r) => [Number(r.seq), r.detector, r.status, r.reason])).toEqual([
      [1, "SA", "accepted", null],
      [2, "BA", "accepted", null],
      [3, "SA", "accepted", null],
    ]);
    const after = counters();
    expect(after.branchApproach - before.branchApproach).toBe(1);
    expect(after.shedApproach - before.shedApproach).toBe(1);
  });

  it("a detector no board serves is still rejected with its reason: after the reload, or after the bound while it hangs, and at once when nothing is saved", async () => {
    const rename = (name: string) => (r: Records) => void (r.detectors.find((d) => d.id === "MA")!.name = name);
    await bankFoot.pulse("MA");
    await waitFor(async () => (await rows("bank-foot", "flight-bf")).length === 1, "bank-foot's first pulse stored");
    const reason = `detector "ZZ" is not served by node "bank-foot"`;

    // Judged against the records as saved, once they are adopted.
    await saveWhileReloadHangs(rename("Main approach, renamed"));
    await bankFoot.pulse("ZZ"); // seq 2
    await bankFoot.pulse("MA"); // seq 3
    await received(2, () => rows("bank-foot", "flight-bf"), 1);
    await h.runtime.idle();
    expect(seqs(await rows("bank-foot", "flight-bf")), "nothing judged against the old boards while the reload is in flight").toEqual([1]);
    gate.open();
    await bankFoot.board.whenCovered();
    await h.runtime.idle();
    expect((await rows("bank-foot", "flight-bf")).map((r) => [Number(r.seq), r.status, r.reason])).toEqual([
      [1, "accepted", null],
      [2, "rejected", reason],
      [3, "accepted", null],
    ]);

    // A reload that hangs holds nothing longer than RECORDS_WAIT_MS of the runner's clock.
    await saveWhileReloadHangs((r) => {
      r.detectors.push({ id: "MY", name: "Main yard", line: "main", at: 3 });
      node(r, "bank-foot").detectors.push("MY");
    });
    await bankFoot.pulse("ZZ"); // seq 4
    await bankFoot.pulse("MA"); // seq 5
    await received(2, () => rows("bank-foot", "flight-bf"), 3);
    await clock.advance(RECORDS_WAIT_MS - 1, () => h.runtime.idle());
    expect(seqs(await rows("bank-foot", "flight-bf")), "still held just before the bound").toEqual([1, 2, 3]);
    await clock.advance(1, () => h.runtime.idle());
    await waitFor(async () => (await rows("bank-foot", "flight-bf")).length === 5, "seqs 4 and 5 judged at the bound");
    expect((await rows("bank-foot", "flight-bf")).slice(3).map((r) => [Number(r.seq), r.status, r.reason])).toEqual([
      [4, "rejected", reason],
      [5, "accepted", null],
    ]);
    expect(gate.held, "the reload was still hanging").toBeGreaterThanOrEqual(1);
    gate.open();
    await waitFor(() => runner().held().changes === 0, "every reload announced to finish");
    expect(runner().nodeDirectory().get("bank-foot")?.detectors.has("MY")).toBe(true);

    // With no save in flight nothing waits: rejected at once, the clock standing still.
    await bankFoot.pulse("ZZ"); // seq 6
    await bankFoot.board.whenCovered();
    await h.runtime.idle();
    const [last] = (await rows("bank-foot", "flight-bf")).slice(-1);
    expect([Number(last.seq), last.status, last.reason]).toEqual([6, "rejected", reason]);
  });

  it("a save that moves a detector and points while other boards send: nothing lost, repeated or reordered, and the others not held up", async () => {
    await save((r) => void (node(r, "shed").points = ["P1"]));
    await waitFor(() => runner().nodeDirectory().get("shed")?.points?.has("P1") === true, "P1 on the shed board in the runner's directory");
    await h.runtime.idle();
    const before = counters();
    const bankFootBefore = (await rows("bank-foot", "flight-bf")).length;
    const shedBefore = (await rows("shed", "flight-sh")).length;

    const stream = async (n: number) => {
      for (let i = 0; i < n; i++) await shed.pulse("BA"); // the shed's since the first test
    };
    const first = stream(20);
    await saveWhileReloadHangs((r) => {
      move(r, "detectors", "SA", "shed", "bank-foot");
      move(r, "points", "P1", "shed", "bank-foot");
    });
    await bankFoot.pulse("MA"); // served before and after the save
    await bankFoot.pulse("SA"); // the bank foot's only as saved
    await bankFoot.board.pointsReport("P1", "reverse"); // likewise
    await bankFoot.pulse("MA"); // behind them
    await first;
    await stream(20);

    // The shed's traffic is stored while the reload still hangs.
    await waitFor(async () => (await rows("shed", "flight-sh")).length === shedBefore + 40, "every shed pulse stored while the reload hangs");
    await h.runtime.idle();
    expect(gate.held).toBeGreaterThanOrEqual(1);
    await received(3, () => rows("bank-foot", "flight-bf"), bankFootBefore + 1);
    expect((await rows("bank-foot", "flight-bf")).length, "only the bank foot's first message judged meanwhile").toBe(bankFootBefore + 1);
    expect(runner().held().messages).toBe(3);

    gate.open();
    await bankFoot.board.whenCovered();
    await shed.board.whenCovered();
    await h.runtime.idle();
    const bf = await rows("bank-foot", "flight-bf");
    expect(seqs(bf)).toEqual(Array.from({ length: bankFootBefore + 4 }, (_, i) => i + 1));
    expect(bf.slice(bankFootBefore).map((r) => [r.kind, r.detector, r.status])).toEqual([
      ["pulse", "MA", "accepted"],
      ["pulse", "SA", "accepted"],
      ["points", null, "accepted"],
      ["pulse", "MA", "accepted"],
    ]);
    const sh = await rows("shed", "flight-sh");
    expect(seqs(sh)).toEqual(Array.from({ length: shedBefore + 40 }, (_, i) => i + 1));
    expect(new Set(sh.slice(shedBefore).map((r) => r.status))).toEqual(new Set(["accepted"]));
    const after = counters();
    expect([after.mainApproach - before.mainApproach, after.shedApproach - before.shedApproach, after.branchApproach - before.branchApproach]).toEqual([2, 1, 40]);
    expect(runner().engineState().points.P1).toBe("reverse");
  });

  it("the first messages of a board registered while the reload is in flight are taken once it is adopted", async () => {
    await save((r) => void r.detectors.push({ id: "MW", name: "Main west", line: "main", at: 1 }));
    await h.runtime.idle();
    gate.close();
    const res = await engineer.post(`/api/layouts/${SLUG}/nodes`).send({ id: "signal-box", name: "Signal box board", detectors: ["MW"], signals: [] });
    expect(res.status).toBe(201);
    await waitFor(() => gate.held >= 1, "the reload of the boards to be in flight");
    const box = await connectBoard(h.mqttUrl, SLUG, "signal-box", res.body.secret, { boot: "flight-sb", announce: true });
    boards.push(box);
    await box.pulse("MW");
    const stored = () => q<Row>(`SELECT seq, status, reason, detector, kind FROM events WHERE node_id = 'signal-box' ORDER BY id`);
    await received(2, stored, 0);
    await h.runtime.idle();
    expect(await stored(), "nothing judged against the old boards").toEqual([]);

    gate.open();
    await box.board.whenCovered();
    await waitFor(async () => (await stored()).length === 2, "its status and pulse stored");
    expect((await stored()).map((r) => [r.kind, r.status, r.reason])).toEqual([
      ["status", "accepted", null],
      ["pulse", "accepted", null],
    ]);
    expect((await runner().liveState()).nodes["signal-box"]?.online).toBe(true);
  });
});
