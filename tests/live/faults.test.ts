/**
 * Faults under continuous traffic, with real processes (CONTRACT.md §2, end to end): the
 * broker and the server are child processes killed with SIGKILL, PostgreSQL refuses every
 * connection for 5 s, a board reboots mid-stream. Two reference boards stream numbered pulses
 * throughout. After each fault, every pulse a board sent is applied exactly once and in seq
 * order: its counter went up by the number sent, no seq is applied twice, and the board's
 * applied pulses in commit order are seq 1, 2, 3, …
 */
import pg from "pg";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import { QueryTypes } from "sequelize";
import type { ReferenceBoard } from "../../broker/referenceBoard";
import { countingLayout, FaultRig, RIG_SLUG, stream } from "../support/faultRig";
import { issueBoardSecrets } from "../support/live";
import { startTestApp, type TestApp } from "../support/testApp";

const RATE_PER_S = 300;
const SECONDS = 4;
const COVERED_TIMEOUT_MS = 45_000;

describe("faults: every pulse sent is applied exactly once, in seq order", () => {
  let t: TestApp;
  let rig: FaultRig;
  let admin: pg.Client;
  let dbName = "";
  let cookie = "";

  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
    t.deps.db.sequelize.query<T>(sql, { type: QueryTypes.SELECT, replacements });

  const databaseUrlOf = (app: TestApp) => {
    const c = app.deps.db.sequelize.config;
    return `postgres://${c.username}${c.password ? `:${c.password}` : ""}@${c.host}:${c.port}/${c.database}`;
  };

  const counters = async (): Promise<Record<string, number>> => {
    const res = await fetch(`${rig.httpUrl}/api/layouts/${RIG_SLUG}/live`, { headers: { cookie } });
    if (res.status !== 200) throw new Error(`live state: ${res.status} ${await res.text()}`);
    return ((await res.json()) as { counters: Record<string, number> }).counters;
  };

  const setConnections = async (allow: boolean) => {
    await admin.query(`ALTER DATABASE ${dbName} ALLOW_CONNECTIONS ${allow}`);
    if (!allow) await admin.query(`SELECT pg_terminate_backend(pid) FROM pg_stat_activity WHERE datname = $1 AND pid <> pg_backend_pid()`, [dbName]);
  };

  beforeAll(async () => {
    t = await startTestApp();
    const engineer = await t.signIn("engineer");
    const imported = await engineer.post("/api/layouts/import").send(countingLayout(2));
    expect(imported.status).toBe(201);
    const secrets = await issueBoardSecrets(t, RIG_SLUG, [
      ["counter-1", ["C1"], ["S1"]],
      ["counter-2", ["C2"], []],
    ]);
    const c = t.deps.db.sequelize.config;
    dbName = c.database;
    const databaseUrl = databaseUrlOf(t);
    admin = new pg.Client({ connectionString: inject("pgAdminUrl") });
    await admin.connect();
    rig = new FaultRig({ databaseUrl, secrets });
    await rig.startBroker();
    await rig.startServer();
    const login = await fetch(`${rig.httpUrl}/api/auth/login`, {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify({ email: "signaller@fernmoor.example", password: "blocklight-demo" }),
    });
    cookie = (login.headers.getSetCookie() ?? []).map((x) => x.split(";")[0]).join("; ");
  }, 120_000);

  afterAll(async () => {
    await setConnections(true).catch(() => {});
    await admin?.end();
    await rig?.close();
    await t?.close();
  });

  async function covered(board: ReferenceBoard, what: string): Promise<void> {
    let timer: NodeJS.Timeout | undefined;
    await Promise.race([
      board.whenCovered(),
      new Promise((_, reject) => {
        timer = setTimeout(
          () => reject(new Error(`${what}: ${board.uncovered} pulses never confirmed\n${rig.server?.output.slice(-20).join("") ?? "(no server)"}`)),
          COVERED_TIMEOUT_MS,
        );
      }),
    ]);
    clearTimeout(timer);
  }

  /** The pulses of one boot in commit order, as stored. */
  const pulsesOf = (boot: string) =>
    q<{ seq: number; status: string }>(`SELECT seq::int AS seq, status FROM events WHERE kind = 'pulse' AND boot = :boot ORDER BY id`, { boot });

  /** Applied exactly once, in seq order: the accepted seqs in commit order are exactly 1..n. */
  async function expectExactlyOnce(boot: string, n: number): Promise<void> {
    const accepted = (await pulsesOf(boot)).filter((r) => r.status === "accepted").map((r) => r.seq);
    expect(accepted.length, `boot ${boot}: applied`).toBe(n);
    expect(new Set(accepted).size, `boot ${boot}: applied twice`).toBe(n);
    expect(accepted, `boot ${boot}: out of order`).toEqual(Array.from({ length: n }, (_, i) => i + 1));
  }

  async function underFault(kind: string, hooks: { atMs: number; run: () => Promise<void> | void }[]): Promise<void> {
    const boards = [rig.board("counter-1"), rig.board("counter-2")];
    await Promise.all(boards.map((b) => b.start()));
    const before = await counters();
    const sent = await stream(
      boards.map((board, i) => ({ board, detector: `C${i + 1}` })),
      RATE_PER_S,
      SECONDS,
      hooks,
    );
    await Promise.all(boards.map((b, i) => covered(b, `${kind}, board ${i + 1}`)));
    for (const [i, board] of boards.entries()) await expectExactlyOnce(board.boot, sent[i]);
    const after = await counters();
    expect(after.n1 - before.n1).toBe(sent[0]);
    expect(after.n2 - before.n2).toBe(sent[1]);
    await Promise.all(boards.map((b) => b.end()));
  }

  it("the server killed with SIGKILL mid-stream", async () => {
    await underFault("server kill", [
      { atMs: 1_500, run: () => rig.kill("server") },
      { atMs: 1_600, run: () => rig.startServer() },
    ]);
  }, 120_000);

  it("the broker killed with SIGKILL mid-stream (its queues and retained messages are lost)", async () => {
    await underFault("broker kill", [
      { atMs: 1_500, run: () => rig.kill("broker") },
      { atMs: 2_000, run: () => rig.startBroker() },
    ]);
  }, 120_000);

  it("the server, then two seconds later the broker, killed with SIGKILL", async () => {
    await underFault("server then broker", [
      { atMs: 1_000, run: () => rig.kill("server") },
      { atMs: 3_000, run: () => rig.kill("broker") },
      { atMs: 3_300, run: async () => Promise.all([rig.startBroker(), rig.startServer()]).then(() => undefined) },
    ]);
  }, 120_000);

  it("PostgreSQL refusing every connection for 5 s", async () => {
    await underFault("database stopped", [
      { atMs: 1_000, run: () => setConnections(false) },
      { atMs: 6_000, run: () => setConnections(true) },
    ]);
  }, 120_000);

  it("PostgreSQL hanging for 5 s (the event log locked: every commit waits, none is refused)", async () => {
    // A frozen database answers nothing; a lock held on the event log does the same to this
    // layout's commits without freezing the cluster the other test files share.
    const locker = new pg.Client({ connectionString: databaseUrlOf(t) });
    await locker.connect();
    try {
      await underFault("database hanging", [
        { atMs: 1_000, run: async () => void (await locker.query("BEGIN; LOCK TABLE events IN ACCESS EXCLUSIVE MODE")) },
        { atMs: 6_000, run: async () => void (await locker.query("COMMIT")) },
      ]);
    } finally {
      await locker.end().catch(() => {});
    }
  }, 120_000);

  it("a board that reboots mid-stream: only what it lost with the old boot is missing", async () => {
    const one = rig.board("counter-1");
    const two = rig.board("counter-2");
    await Promise.all([one.start(), two.start()]);
    const before = await counters();
    let oldBoot = "";
    let oldSent = 0;
    const sent = await stream(
      [
        { board: one, detector: "C1" },
        { board: two, detector: "C2" },
      ],
      RATE_PER_S,
      SECONDS,
      [
        {
          atMs: 1_500,
          run: () => {
            oldBoot = one.boot;
            oldSent = one.seq;
            one.reboot();
          },
        },
      ],
    );
    await Promise.all([covered(one, "rebooted board"), covered(two, "other board")]);
    const newSent = sent[0] - oldSent;
    await expectExactlyOnce(one.boot, newSent);
    await expectExactlyOnce(two.boot, sent[1]);
    // The old boot: a prefix 1..k applied once each, in order; nothing after the reboot.
    const old = (await pulsesOf(oldBoot)).filter((r) => r.status === "accepted").map((r) => r.seq);
    expect(old).toEqual(Array.from({ length: old.length }, (_, i) => i + 1));
    expect(old.length).toBeLessThanOrEqual(oldSent);
    const after = await counters();
    expect(after.n1 - before.n1).toBe(old.length + newSent);
    expect(after.n2 - before.n2).toBe(sent[1]);
    await Promise.all([one.end(), two.end()]);
  }, 120_000);
});
