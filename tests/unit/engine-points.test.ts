import { describe, expect, it } from "vitest";
import { initialState, step } from "@shared/rulebook/engine";
import { rulebookSchema, type Rulebook } from "@shared/rulebook/schema";
import { validateRulebookFile } from "@shared/rulebook/validate";
import { lowestFormat } from "@shared/rulebook/mentions";

const book = (rules: unknown[], extra: Record<string, unknown> = {}): Rulebook =>
  rulebookSchema.parse({ format: "blocklight.rulebook/2", counters: { moves: 0 }, latches: { seen: false }, initial: { W1: "danger" }, rules, ...extra });

describe("points reports (rulebook /2)", () => {
  it("selects moved rules on the state before the report and records the position after selection", () => {
    const rb = book([
      // Selected only while P1 still lies as before the report (unknown → normal).
      { id: "was-unknown", on: { moved: "P1" }, if: { points: "P1", lies: "unknown" }, do: [{ add: "moves", by: 10 }] },
      { id: "count", on: { moved: "P1" }, do: [{ add: "moves", by: 1 }] },
      { id: "now-normal", on: "standing", if: { points: "P1", lies: "normal" }, do: [{ set: "seen" }] },
    ]);
    const s0 = initialState(rb);
    const r1 = step(rb, s0, { type: "points", points: "P1", lies: "normal", at: 5 });
    expect(r1.state.points).toEqual({ P1: "normal" });
    expect(r1.state.counters.moves).toBe(11);
    expect(r1.state.latches.seen).toBe(true);
    expect(r1.changes[0]).toMatchObject({ kind: "points", name: "P1", from: "unknown", to: "normal" });
  });

  it.each([
    ["the same position again", "normal", 0],
    ["another position", "moving", 1],
  ] as const)("a report of %s runs moved rules %i times", (_, lies, runs) => {
    const rb = book([{ id: "count", on: { moved: "P1" }, do: [{ add: "moves", by: 1 }] }]);
    const s1 = step(rb, initialState(rb), { type: "points", points: "P1", lies: "normal", at: 1 }).state;
    const s2 = step(rb, s1, { type: "points", points: "P1", lies, at: 2 }).state;
    expect(s2.counters.moves - s1.counters.moves).toBe(runs);
  });

  it("a throw is returned as a change and remembered; a standing throw does not loop", () => {
    const rb = book([{ id: "throw", on: "standing", if: { points: "P1", lies: "normal" }, do: [{ throw: "P1", to: "reverse" }] }]);
    const r = step(rb, initialState(rb), { type: "points", points: "P1", lies: "normal", at: 1 });
    expect(r.state.faulted).toBeNull();
    expect(r.state.thrown).toEqual({ P1: "reverse" });
    expect(r.changes.filter((c) => c.kind === "throw")).toEqual([{ kind: "throw", name: "P1", from: null, to: "reverse", rule: "throw" }]);
  });

  it("a faulted rulebook records where points lie but runs no rules", () => {
    const rb = book([
      { id: "a", on: "standing", if: { latch: "seen" }, do: [{ clear: "seen" }] },
      { id: "b", on: "standing", if: { not: { latch: "seen" } }, do: [{ set: "seen" }] },
      { id: "count", on: { moved: "P1" }, do: [{ add: "moves", by: 1 }] },
    ]);
    const s0 = initialState(rb);
    expect(s0.faulted).not.toBeNull();
    const s1 = step(rb, s0, { type: "points", points: "P1", lies: "reverse", at: 1 }).state;
    expect(s1.points.P1).toBe("reverse");
    expect(s1.counters.moves).toBe(0);
  });
});

describe("rulebook /2 validation", () => {
  const layoutContext = {
    detectors: ["WA"],
    signals: [{ id: "W1", aspects: ["danger" as const, "clear" as const] }],
    points: [
      { id: "P1", worked: "power" as const },
      { id: "P2", worked: "hand" as const },
    ],
    reportedPoints: ["P1"],
  };
  it.each([
    ["a /1 file using moved", { format: "blocklight.rulebook/1", rules: [{ id: "m", on: { moved: "P1" }, do: [] }] }, "$.rules[0].on.moved", "needs format"],
    ["a /1 file using a points condition", { format: "blocklight.rulebook/1", rules: [{ id: "m", on: "standing", if: { points: "P1", lies: "normal" }, do: [] }] }, "$.rules[0].if.points", "needs format"],
    ["a throw of hand points", { format: "blocklight.rulebook/2", rules: [{ id: "t", on: { pass: "WA" }, do: [{ throw: "P2", to: "normal" }] }] }, "$.rules[0].do[0].throw", "worked by hand"],
    ["unknown points", { format: "blocklight.rulebook/2", rules: [{ id: "t", on: { moved: "P9" }, do: [] }] }, "$.rules[0].on.moved", 'unknown points "P9"'],
    ["a bad position", { format: "blocklight.rulebook/2", rules: [{ id: "t", on: { pass: "WA" }, do: [{ throw: "P1", to: "moving" }] }] }, "$.rules[0].do[0].to", ""],
    [
      "route points no node reports",
      { format: "blocklight.rulebook/2", rules: [], proving: { routes: [{ id: "r", signal: "W1", approach: ["WA"], entry: "WA", exit: ["WA"], points: { P2: "reverse" } }] } },
      "$.proving.routes[0].points.P2",
      "no node reports",
    ],
  ])("refuses %s, with its path", (_, file, path, message) => {
    const result = validateRulebookFile(file, layoutContext);
    expect(result.ok).toBe(false);
    if (!result.ok) expect(result.errors.find((e) => e.path === path)?.message ?? "(none)").toContain(message);
  });

  it("accepts a /2 file that throws power points, and names the lowest format it needs", () => {
    const file = { format: "blocklight.rulebook/2", rules: [{ id: "t", on: { moved: "P1" }, if: { points: "P1", lies: "moving" }, do: [{ throw: "P1", to: "normal" }] }] };
    const result = validateRulebookFile(file, layoutContext);
    expect(result.ok).toBe(true);
    if (result.ok) expect(lowestFormat(result.rulebook)).toBe("blocklight.rulebook/2");
    const one = validateRulebookFile({ format: "blocklight.rulebook/2", rules: [] });
    expect(one.ok && lowestFormat(one.rulebook)).toBe("blocklight.rulebook/1");
  });
});
