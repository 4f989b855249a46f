/**
 * Crash and recovery: the runtime is dropped mid-stream (no clean shutdown, nothing flushed),
 * a new one starts on the same database and broker. Every pulse ends up applied exactly once
 * and the state equals a replay of the stored log from the start.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import { replay, shownAspects, type EngineInput, type EngineState } from "@shared/rulebook/engine";
import type { Rulebook } from "@shared/rulebook/schema";
import { startTestApp, type TestApp } from "../support/testApp";
import { connectBoard, issueBoardSecrets, KESTREL_BOARDS, startLiveHarness, waitFor, type LiveHarness } from "../support/live";

const SLUG = "kestrel-bank";

describe("crash and recovery", () => {
  let t: TestApp;
  let h: LiveHarness;
  let secrets = new Map<string, string>();
  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
    t.deps.db.sequelize.query<T>(sql, { type: QueryTypes.SELECT, replacements });

  beforeAll(async () => {
    t = await startTestApp();
    // Small snapshot interval: recovery uses a snapshot and replays what came after it.
    h = await startLiveHarness(t, { snapshotEvery: 25 });
    secrets = await issueBoardSecrets(t, SLUG, [KESTREL_BOARDS.bankFoot, ["junction", ["ME", "JX"], []]]);
  });
  afterAll(async () => {
    await h?.close();
    await t?.close();
  });

  /** The state a replay of every stored accepted input gives, from the layout's first snapshot. */
  async function replayedFromScratch(): Promise<{ state: EngineState; rulebook: Rulebook }> {
    const [first] = await q<{ state: { engine: EngineState }; last_event_id: string }>(
      `SELECT s.state, s.last_event_id FROM snapshots s JOIN layouts l ON l.id = s.layout_id WHERE l.slug = :slug ORDER BY s.id LIMIT 1`,
      { slug: SLUG },
    );
    const [{ rulebook }] = await q<{ rulebook: Rulebook }>(
      `SELECT v.rulebook FROM rulebook_versions v JOIN layouts l ON l.id = v.layout_id AND v.version = l.live_version WHERE l.slug = :slug`,
      { slug: SLUG },
    );
    const rows = await q<{ kind: string; detector: string; received_at: Date; input: EngineInput | null }>(
      `SELECT e.kind, e.detector, e.received_at, e.input FROM events e JOIN layouts l ON l.id = e.layout_id
        WHERE l.slug = :slug AND e.id > :after AND e.status = 'accepted' AND e.kind IN ('pulse','tick','command') ORDER BY e.id`,
      { slug: SLUG, after: first.last_event_id },
    );
    const inputs = rows.map((r): EngineInput => (r.kind === "pulse" ? { type: "pulse", detector: r.detector, at: new Date(r.received_at).getTime() } : r.input!));
    return { state: replay(rulebook, first.state.engine, inputs).state, rulebook };
  }

  it("loses nothing and applies each pulse once when the runtime dies mid-stream", async () => {
    const bankFoot = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!, { boot: "crash1" });
    const junction = await connectBoard(h.mqttUrl, SLUG, "junction", secrets.get("junction")!, { boot: "crash2" });
    const TRAINS = 60;
    // Trains of two axles: MA MA ME ME JX JX, sent as fast as the boards can.
    const sent: Promise<void>[] = [];
    for (let i = 0; i < TRAINS; i++) {
      sent.push(bankFoot.pulse("MA"), bankFoot.pulse("MA"));
      sent.push(junction.pulse("ME"), junction.pulse("ME"), junction.pulse("JX"), junction.pulse("JX"));
      if (i === TRAINS / 3) {
        // Crash once some of the stream is committed and more is in flight.
        await waitFor(async () => (await q<{ n: number }>(`SELECT count(*)::int AS n FROM events WHERE kind = 'pulse'`))[0].n > 40, "part of the stream committed");
        await h.runtime.crash();
      }
    }
    await Promise.all(sent); // the broker has every pulse (board → broker QoS 1)
    const runtime = await h.startRuntime({ snapshotEvery: 25 });
    const total = TRAINS * 6;
    await waitFor(
      async () => (await q<{ n: number }>(`SELECT count(*)::int AS n FROM events WHERE kind = 'pulse' AND status = 'accepted'`))[0].n === total,
      "every pulse applied",
      20_000,
    );
    await runtime.idle();
    const perSeq = await q<{ node_id: string; n: number }>(
      `SELECT node_id, count(DISTINCT seq)::int AS n FROM events WHERE kind = 'pulse' AND status = 'accepted' GROUP BY node_id ORDER BY node_id`,
    );
    expect(perSeq).toEqual([
      { node_id: "bank-foot", n: TRAINS * 2 },
      { node_id: "junction", n: TRAINS * 4 },
    ]);
    const rejected = await q<{ n: number }>(`SELECT count(*)::int AS n FROM events WHERE status = 'rejected'`);
    expect(rejected[0].n).toBe(0);
    // The broker may still be redelivering what was in flight at the crash (each stored as a
    // duplicate and acknowledged after its commit): every message received is acknowledged.
    await waitFor(() => runtime.pendingAcks() === 0, "every received message acknowledged");

    const live = runtime.runner(SLUG)!.engineState();
    const { state: reference, rulebook } = await replayedFromScratch();
    expect(live).toEqual(reference);
    expect(shownAspects(rulebook, live)).toEqual(shownAspects(rulebook, reference));
    // Snapshots were taken along the way, so the restart replayed only a tail.
    const snaps = await q<{ n: number }>(`SELECT count(*)::int AS n FROM snapshots`);
    expect(snaps[0].n).toBeGreaterThan(2);
    await Promise.all([bankFoot.end(), junction.end()]);
  });

  it("a clean restart resumes with the identical state and the same session", async () => {
    const before = h.runtime.runner(SLUG)!.engineState();
    const stateBefore = await h.runtime.liveState(SLUG);
    await h.runtime.stop();
    const runtime = await h.startRuntime({ snapshotEvery: 25 });
    expect(runtime.runner(SLUG)!.engineState()).toEqual(before);
    const stateAfter = await runtime.liveState(SLUG);
    expect(stateAfter.session?.id).toBe(stateBefore.session?.id);
    expect(stateAfter.shown).toEqual(stateBefore.shown);
  });
});
