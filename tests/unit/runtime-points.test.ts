/**
 * Power-worked points in the live core, without PostgreSQL or MQTT (CONTRACT.md §2): a throw
 * becomes a `…/points/{id}/set` command with a new rev; points reports, sequenced with the
 * boot's pulses, reach the engine and the live state; points not reported where thrown within
 * the time raise a "points-detection" alarm, which the late report clears.
 */
import { describe, expect, it } from "vitest";
import { apply, nextDue, type CoreInput } from "../../server/runtime/core/apply";
import { nextPointsDue, pointsCommands } from "../../server/runtime/core/points";
import { aspectCommands, createCore, fullPatch, type Core, type Effect, type HeldMessage } from "../../server/runtime/core/state";
import { ingestMessage, type NodeEntry } from "../../server/runtime/ingest";
import { initialState } from "@shared/rulebook/engine";
import { rulebookSchema } from "@shared/rulebook/schema";

const DETECTION_MS = 3_000;
const rulebook = rulebookSchema.parse({
  format: "blocklight.rulebook/2",
  latches: {},
  counters: {},
  selectors: {},
  initial: { W1: "danger" },
  rules: [
    { id: "set-loop", on: { pass: "WA" }, do: [{ throw: "P2", to: "reverse" }] },
    { id: "loop-ready", on: "standing", if: { points: "P2", lies: "reverse" }, do: [{ show: "W1", aspect: "clear" }] },
    { id: "points-moving", on: { moved: "P2" }, if: { not: { points: "P2", lies: "reverse" } }, do: [{ show: "W1", aspect: "danger" }] },
  ],
});
const BOARD: NodeEntry = { detectors: new Set(["WA"]), signals: new Set(["W1"]), points: new Set(["P2"]) };

function core(): Core {
  const c = createCore({
    layoutId: 1,
    slug: "wrenfold-loop",
    options: { sessionIdleMs: 60_000, snapshotEvery: 1000, reorderWaitMs: 10_000, pointsDetectionMs: DETECTION_MS },
    rulebook,
    rulebookVersion: 1,
    state: initialState(rulebook, 0),
    aspectRev: 0,
  });
  c.nodes.set("loop-points", BOARD);
  aspectCommands(c, true);
  return c;
}

let ref = 0;
function message(suffix: "pulse" | "points", payload: unknown, at: number): CoreInput {
  const topic = `blocklight/v1/wrenfold-loop/node/loop-points/${suffix}`;
  const bytes = Buffer.from(JSON.stringify(payload));
  const result = ingestMessage(topic, bytes, () => new Map([["loop-points", BOARD]]));
  const held: HeldMessage = { topic, payload: bytes, receivedAt: at, result, ref: ++ref };
  return { type: "message", message: held, retain: false };
}

function run(c: Core, input: CoreInput, at: number): { core: Core; effects: Effect[]; statuses: string[] } {
  const step = apply(c, input, at);
  return { core: step.core, effects: step.effects, statuses: step.rows.events.map((e) => `${e.kind}:${e.status}`) };
}
const alarms = (effects: Effect[]) => effects.filter((e) => e.type === "alarm" || e.type === "clear").map((e) => `${e.type} ${e.kind} ${e.subject}`);

describe("live points in the core", () => {
  it("a throw is commanded once with a new rev; reports moving then reverse reach the engine and the live state", () => {
    let c = core();
    const revBefore = c.aspectRev;
    c = run(c, message("pulse", { detector: "WA", seq: 1, boot: "b1" }, 1000), 1000).core;
    expect(c.state.thrown).toEqual({ P2: "reverse" });
    const commands = pointsCommands(c);
    expect(commands).toEqual([{ points: "P2", to: "reverse", rev: revBefore + 1 }]);
    expect(pointsCommands(c)).toEqual([]); // told once
    expect(nextDue(c)).toBe(1000 + DETECTION_MS);

    const moving = run(c, message("points", { points: "P2", lies: "moving", seq: 2, boot: "b1" }, 1500), 1500);
    c = moving.core;
    expect(moving.statuses).toEqual(["points:accepted"]);
    expect(moving.effects.some((e) => e.type === "update" && e.patch.points?.P2 === "moving")).toBe(true);
    const done = run(c, message("points", { points: "P2", lies: "reverse", seq: 3, boot: "b1" }, 2500), 2500);
    c = done.core;
    expect(done.effects.filter((e) => e.type === "covered").map((e) => (e as { seq: number }).seq)).toEqual([3]);
    expect(fullPatch(c)).toMatchObject({ points: { P2: "reverse" }, thrown: { P2: "reverse" }, shown: { W1: "clear" } });
    // Reported where thrown in time: no check left, no alarm at any later tick.
    expect(nextPointsDue(c)).toBeNull();
    expect(alarms(run(c, { type: "tick" }, 60_000).effects)).toEqual([]);
  });

  it("points reports share the boot's seq with pulses: a report ahead of a missing pulse waits for it", () => {
    let c = core();
    const ahead = run(c, message("points", { points: "P2", lies: "moving", seq: 2, boot: "b1" }, 100), 100);
    c = ahead.core;
    expect(ahead.statuses).toEqual([]);
    expect(c.state.points).toEqual({});
    const gapFilled = run(c, message("pulse", { detector: "WA", seq: 1, boot: "b1" }, 200), 200);
    expect(gapFilled.statuses).toEqual(["pulse:accepted", "points:accepted"]);
    expect(gapFilled.core.state.points).toEqual({ P2: "moving" });
  });

  it("points that never reach where they were thrown raise one alarm at the time, cleared by the late report", () => {
    let c = core();
    c = run(c, message("pulse", { detector: "WA", seq: 1, boot: "b1" }, 1000), 1000).core;
    expect(alarms(run(c, { type: "tick" }, 1000 + DETECTION_MS - 1).effects)).toEqual([]);
    const late = run(c, { type: "tick" }, 1000 + DETECTION_MS);
    c = late.core;
    expect(alarms(late.effects)).toEqual(["alarm points-detection P2"]);
    expect((late.effects.find((e) => e.type === "alarm") as { message: string }).message).toMatch(/thrown reverse .* reported nowhere yet/);
    expect(alarms(run(c, { type: "tick" }, 1000 + 2 * DETECTION_MS).effects)).toEqual([]); // once
    expect(nextPointsDue(c)).toBeNull();
    const report = run(c, message("points", { points: "P2", lies: "reverse", seq: 2, boot: "b1" }, 9000), 9000);
    expect(alarms(report.effects)).toEqual(["clear points-detection P2"]);
  });

  it("a throw to where the points already lie needs no check; no command goes out under a pipeline fault", () => {
    let c = core();
    c = run(c, message("points", { points: "P2", lies: "reverse", seq: 1, boot: "b1" }, 100), 100).core;
    c = run(c, message("pulse", { detector: "WA", seq: 2, boot: "b1" }, 200), 200).core;
    expect(c.state.thrown).toEqual({ P2: "reverse" });
    expect(nextPointsDue(c)).toBeNull();
    c.pipelineFault = { reason: "test", at: 300 };
    expect(pointsCommands(c)).toEqual([]);
    c.pipelineFault = null;
    expect(pointsCommands(c).map((p) => p.to)).toEqual(["reverse"]);
    // After a reconnect every thrown points is commanded again with a new rev.
    const again = pointsCommands(c, true);
    expect(again).toHaveLength(1);
    expect(again[0].rev).toBeGreaterThan(c.published.get("W1")!.rev);
  });
});
