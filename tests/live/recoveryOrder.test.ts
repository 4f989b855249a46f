/**
 * Recovery replays stored inputs in event order. A regression test for a replay query that
 * selected `id::text` and sorted by it, so event 10 came before event 9 once ids grew a digit.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import { startTestApp, type TestApp } from "../support/testApp";
import { connectBoard, issueBoardSecrets, KESTREL_BOARDS, startLiveHarness, waitFor, type LiveHarness } from "../support/live";

const SLUG = "kestrel-bank";
/** No snapshot during the run: the restart must replay every event, across 9→10 and 99→100. */
const NO_SNAPSHOTS = 1_000_000;

describe("recovery order", () => {
  let t: TestApp;
  let h: LiveHarness;
  let secrets = new Map<string, string>();
  const count = async (sql: string) => (await t.deps.db.sequelize.query<{ n: number }>(sql, { type: QueryTypes.SELECT }))[0].n;

  beforeAll(async () => {
    t = await startTestApp();
    h = await startLiveHarness(t, { snapshotEvery: NO_SNAPSHOTS });
    secrets = await issueBoardSecrets(t, SLUG, [KESTREL_BOARDS.bankFoot, ["junction", ["ME", "JX"], []]]);
  });
  afterAll(async () => {
    await h?.close();
    await t?.close();
  });

  it("rebuilds the identical state from more than a hundred events after a crash", async () => {
    const bankFoot = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!, { boot: "order1" });
    const junction = await connectBoard(h.mqttUrl, SLUG, "junction", secrets.get("junction")!, { boot: "order2" });
    const TRAINS = 22; // 132 pulses; one train at a time so every pulse changes the state in order
    for (let i = 0; i < TRAINS; i++) {
      for (const pulse of [() => bankFoot.pulse("MA"), () => bankFoot.pulse("MA"), () => junction.pulse("ME"), () => junction.pulse("ME"), () => junction.pulse("JX")]) await pulse();
      // The last axle leaves with a train half-way through the next step of the sequence.
      if (i < TRAINS - 1) await junction.pulse("JX");
    }
    await waitFor(async () => (await count(`SELECT count(*)::int AS n FROM events WHERE kind = 'pulse' AND status = 'accepted'`)) === TRAINS * 6 - 1, "every pulse applied", 20_000);
    await h.runtime.idle();
    const before = h.runtime.runner(SLUG)!.engineState();
    expect(await count(`SELECT max(id)::int AS n FROM events`)).toBeGreaterThan(100);

    await h.runtime.crash();
    const runtime = await h.startRuntime({ snapshotEvery: NO_SNAPSHOTS });
    expect(runtime.runner(SLUG)!.engineState()).toEqual(before);
    await Promise.all([bankFoot.end(), junction.end()]);
  });
});
