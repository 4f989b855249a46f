/**
 * PostgreSQL unavailable for a few seconds. Simulated for real: the test database stops
 * accepting connections (`ALTER DATABASE … ALLOW_CONNECTIONS false`) and every open
 * connection to it is terminated, so the runtime's commits fail exactly as they would if the
 * server went away. Pulses keep arriving meanwhile.
 */
import pg from "pg";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import { QueryTypes } from "sequelize";
import { startTestApp, type TestApp } from "../support/testApp";
import { connectBoard, issueBoardSecrets, KESTREL_BOARDS, startLiveHarness, waitFor, type LiveHarness } from "../support/live";

const SLUG = "kestrel-bank";
const OUTAGE_DANGER_MS = 1_000;

describe("database outage", () => {
  let t: TestApp;
  let h: LiveHarness;
  let admin: pg.Client;
  let dbName: string;
  let secrets = new Map<string, string>();

  const setConnections = async (allow: boolean) => {
    await admin.query(`ALTER DATABASE ${dbName} ALLOW_CONNECTIONS ${allow}`);
    if (!allow) await admin.query(`SELECT pg_terminate_backend(pid) FROM pg_stat_activity WHERE datname = $1 AND pid <> pg_backend_pid()`, [dbName]);
  };

  beforeAll(async () => {
    t = await startTestApp();
    dbName = t.deps.db.sequelize.config.database;
    admin = new pg.Client({ connectionString: inject("pgAdminUrl") });
    await admin.connect();
    h = await startLiveHarness(t, { failsafeAfterMs: OUTAGE_DANGER_MS });
    secrets = await issueBoardSecrets(t, SLUG, [KESTREL_BOARDS.bankFoot, KESTREL_BOARDS.junction]);
  });
  afterAll(async () => {
    await setConnections(true).catch(() => {});
    await admin?.end();
    await h?.close();
    await t?.close();
  });

  it("holds the acknowledgements, shows danger, then applies every pulse exactly once", async () => {
    const bankFoot = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!, { boot: "out001" });
    const junction = await connectBoard(h.mqttUrl, SLUG, "junction", secrets.get("junction")!);
    await bankFoot.pulse("MA");
    await waitFor(() => junction.aspects.get("M1")?.aspect === "clear", "M1 clear before the outage");

    await setConnections(false);
    const DURING = 20;
    for (let i = 0; i < DURING; i++) await bankFoot.pulse("MA");
    await waitFor(() => h.runtime.pendingAcks() === DURING, "the outage pulses received but unacknowledged");
    // Commits keep failing: after OUTAGE_DANGER_MS every signal goes to danger (fail-safe).
    await waitFor(() => junction.aspects.get("M1")?.aspect === "danger", "M1 at danger during the outage", 10_000);
    expect(h.runtime.pendingAcks()).toBe(DURING);
    await new Promise((resolve) => setTimeout(resolve, 1_000)); // a few seconds in all

    await setConnections(true);
    await waitFor(() => h.runtime.pendingAcks() === 0, "every pulse acknowledged after the outage", 15_000);
    await waitFor(() => junction.aspects.get("M1")?.aspect === "clear", "M1 clear again");
    const rows = await t.deps.db.sequelize.query<{ status: string; n: number; seqs: number }>(
      `SELECT status, count(*)::int AS n, count(DISTINCT seq)::int AS seqs FROM events WHERE boot = 'out001' GROUP BY status`,
      { type: QueryTypes.SELECT },
    );
    expect(rows).toEqual([{ status: "accepted", n: DURING + 1, seqs: DURING + 1 }]);
    const live = await h.runtime.liveState(SLUG);
    expect(live.counters.mainApproach).toBe(DURING + 1);
    expect(live.faulted).toBeNull();
    await Promise.all([bankFoot.end(), junction.end()]);
  });
});
