import { QueryClient } from "@tanstack/react-query";
import { describe, expect, it } from "vitest";
import type { LivePatch, LiveState, LiveStep, LiveUpdate } from "@shared/contract/live";
import { liveKeys, TICKER_LENGTH, type TickerEntry } from "../../src/api/live";
import { applyBatch, mergeAlarm } from "../../src/hooks/useLiveLayout";

const SLUG = "kestrel-bank";
const base: LiveState = {
  slug: SLUG,
  version: 10,
  rulebookVersion: 1,
  session: null,
  shown: { M1: "danger" },
  latches: {},
  counters: { mainApproach: 0 },
  selectors: { route: "none" },
  held: [],
  quiet: {},
  faulted: null,
  alarms: [],
  nodes: {},
  since: {},
};
const step = (version: number, detector?: string): LiveStep => ({
  version,
  event: detector
    ? { id: String(version), kind: "pulse", status: "accepted", reason: null, node: "bank-foot", boot: "b", seq: version, detector, receivedAt: "2026-05-02T10:15:03.120Z", boardT: null }
    : null,
  changes: [],
});
/** A push of one step. */
const update = (version: number, patch: LivePatch, detector?: string): LiveUpdate => ({ slug: SLUG, from: version, version, steps: [step(version, detector)], patch });
/** A push of a commit batch: steps `from` … `from + detectors.length - 1` (null: a step without a pulse). */
const batchOf = (from: number, detectors: (string | null)[], patch: LivePatch): LiveUpdate => ({
  slug: SLUG,
  from,
  version: from + detectors.length - 1,
  steps: detectors.map((d, i) => step(from + i, d ?? undefined)),
  patch,
});

function setup() {
  const qc = new QueryClient();
  qc.setQueryData(liveKeys.state(SLUG), base);
  let gaps = 0;
  return { qc, apply: (batch: LiveUpdate[]) => applyBatch(qc, SLUG, batch, () => gaps++), gaps: () => gaps };
}

describe("live updates into the query cache", () => {
  it("applies consecutive updates in order, counts pulses and fills the ticker", () => {
    const { qc, apply, gaps } = setup();
    apply([update(11, { counters: { mainApproach: 1 } }, "MA"), update(12, { shown: { M1: "clear" }, selectors: { route: "main" } }), update(13, {}, "MA")]);
    const state = qc.getQueryData<LiveState>(liveKeys.state(SLUG))!;
    expect(state.version).toBe(13);
    expect(state.shown.M1).toBe("clear");
    expect(state.counters.mainApproach).toBe(1);
    expect(qc.getQueryData(liveKeys.pulses(SLUG))).toEqual({ MA: 2 });
    expect(qc.getQueryData<TickerEntry[]>(liveKeys.ticker(SLUG))!.map((e) => e.version)).toEqual([13, 12, 11]);
    expect(gaps()).toBe(0);
  });

  it("skips updates already in the state", () => {
    const { qc, apply, gaps } = setup();
    apply([update(9, { shown: { M1: "clear" } }), update(10, { shown: { M1: "clear" } })]);
    expect(qc.getQueryData<LiveState>(liveKeys.state(SLUG))!.shown.M1).toBe("danger");
    expect(gaps()).toBe(0);
  });

  it("stops at a gap and asks for the whole state again", () => {
    const { qc, apply, gaps } = setup();
    apply([update(11, { counters: { mainApproach: 1 } }), update(13, { shown: { M1: "clear" } })]);
    const state = qc.getQueryData<LiveState>(liveKeys.state(SLUG))!;
    expect(state.version).toBe(11);
    expect(state.shown.M1).toBe("danger");
    expect(gaps()).toBe(1);
  });

  it("applies one push per commit batch: every step counted and in the ticker, the batch's patch once", () => {
    const { qc, apply, gaps } = setup();
    apply([batchOf(11, ["MA", null, "MA", "ME"], { counters: { mainApproach: 2 }, shown: { M1: "clear" } }), batchOf(15, ["ME"], { shown: { M1: "danger" } })]);
    const state = qc.getQueryData<LiveState>(liveKeys.state(SLUG))!;
    expect(state.version).toBe(15);
    expect(state.shown.M1).toBe("danger");
    expect(state.counters.mainApproach).toBe(2);
    expect(qc.getQueryData(liveKeys.pulses(SLUG))).toEqual({ MA: 2, ME: 2 });
    expect(qc.getQueryData<TickerEntry[]>(liveKeys.ticker(SLUG))!.map((e) => e.version)).toEqual([15, 14, 13, 12, 11]);
    expect(gaps()).toBe(0);
  });

  it("takes only the new steps of a push that overlaps the cached state", () => {
    const { qc, apply, gaps } = setup();
    apply([batchOf(9, ["MA", "MA", "MA", "ME"], { counters: { mainApproach: 3 } })]);
    expect(qc.getQueryData<LiveState>(liveKeys.state(SLUG))!.version).toBe(12);
    expect(qc.getQueryData<LiveState>(liveKeys.state(SLUG))!.counters.mainApproach).toBe(3);
    expect(qc.getQueryData(liveKeys.pulses(SLUG))).toEqual({ MA: 1, ME: 1 });
    expect(qc.getQueryData<TickerEntry[]>(liveKeys.ticker(SLUG))!.map((e) => e.version)).toEqual([12, 11]);
    expect(gaps()).toBe(0);
  });

  it("stops at a batch that starts past the next version", () => {
    const { qc, apply, gaps } = setup();
    apply([batchOf(11, ["MA", "MA"], { counters: { mainApproach: 2 } }), batchOf(14, ["ME"], { shown: { M1: "clear" } })]);
    const state = qc.getQueryData<LiveState>(liveKeys.state(SLUG))!;
    expect(state.version).toBe(12);
    expect(state.shown.M1).toBe("danger");
    expect(gaps()).toBe(1);
  });

  it("keeps the newest steps in the ticker when a batch is longer than it", () => {
    const { qc, apply } = setup();
    const long = Array.from({ length: TICKER_LENGTH + 20 }, () => "MA");
    apply([batchOf(11, long, {})]);
    const ticker = qc.getQueryData<TickerEntry[]>(liveKeys.ticker(SLUG))!;
    expect(ticker).toHaveLength(TICKER_LENGTH);
    expect(ticker[0].version).toBe(10 + long.length);
    expect(ticker.at(-1)!.version).toBe(10 + long.length - TICKER_LENGTH + 1);
    expect(qc.getQueryData(liveKeys.pulses(SLUG))).toEqual({ MA: long.length });
  });

  it("merges a changed alarm by id", () => {
    const alarm = { id: 1, kind: "stuck" as const, subject: "junction", message: "m", raisedAt: "t", acknowledgedAt: null, acknowledgedBy: null, comment: null, clearedAt: null, occurrences: 1, lastSeenAt: "t" };
    const list = mergeAlarm([], alarm);
    expect(mergeAlarm(list, { ...alarm, acknowledgedAt: "t2" })).toEqual([{ ...alarm, acknowledgedAt: "t2" }]);
  });
});
