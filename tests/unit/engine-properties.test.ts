import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { initialState, replay, shownAspects, step, type EngineInput, type EngineState } from "@shared/rulebook/engine";
import type { Rulebook } from "@shared/rulebook/schema";

const base = kestrelBankLayout().rulebook;
/** Kestrel Bank plus a quiet trigger and a latch, so every kind of input does something. */
const rulebook: Rulebook = {
  ...base,
  latches: { shuntLock: false },
  rules: [
    ...base.rules,
    { id: "main-stopped", on: { quiet: "MA", ms: 30_000 }, if: { count: "mainApproach", op: ">", value: 0 }, do: [{ alarm: "Main train stopped on the bank" }] },
    { id: "shunt-holds-branch", on: "standing", if: { all: [{ latch: "shuntLock" }, { aspect: "B1", is: "clear" }] }, do: [{ show: "B1", aspect: "danger" }] },
  ],
};

const signal = fc.constantFrom("M1", "B1");
const input: fc.Arbitrary<Omit<EngineInput, "at">> = fc.oneof(
  { weight: 12, arbitrary: fc.constantFrom("MA", "ME", "BA", "BE", "JX", "QQ").map((detector) => ({ type: "pulse" as const, detector })) },
  { weight: 2, arbitrary: fc.constant({ type: "tick" as const }) },
  { weight: 1, arbitrary: signal.map((s) => ({ type: "command" as const, command: "hold" as const, signal: s })) },
  { weight: 1, arbitrary: signal.map((s) => ({ type: "command" as const, command: "release" as const, signal: s })) },
  { weight: 1, arbitrary: fc.constantFrom("set" as const, "clear" as const).map((command) => ({ type: "command" as const, command, latch: "shuntLock" })) },
  { weight: 1, arbitrary: fc.constantFrom("junction", "mainApproach").map((counter) => ({ type: "command" as const, command: "zero" as const, counter })) },
  { weight: 1, arbitrary: fc.constant({ type: "command" as const, command: "restart" as const }) },
) as fc.Arbitrary<Omit<EngineInput, "at">>;
/** Inputs with times that mostly go forward, sometimes back (late delivery). */
const session = fc.array(fc.tuple(input, fc.integer({ min: -2_000, max: 40_000 })), { maxLength: 80 }).map((rows) => {
  let at = 0;
  return rows.map(([event, gap]) => {
    at = Math.max(0, at + gap);
    return { ...event, at } as EngineInput;
  });
});

function runAll(inputs: EngineInput[]): EngineState[] {
  const states = [initialState(rulebook)];
  for (const event of inputs) states.push(step(rulebook, states[states.length - 1], event).state);
  return states;
}

describe("engine properties", () => {
  it("is deterministic: the same inputs give the same states and changes", () => {
    fc.assert(
      fc.property(session, (inputs) => {
        const a = replay(rulebook, initialState(rulebook), inputs);
        const b = replay(rulebook, initialState(rulebook), JSON.parse(JSON.stringify(inputs)));
        expect(b).toEqual(a);
      }),
    );
  });

  it("a batch replay equals stepping one input at a time", () => {
    fc.assert(
      fc.property(session, (inputs) => {
        const states = runAll(inputs);
        expect(replay(rulebook, initialState(rulebook), inputs).state).toEqual(states[states.length - 1]);
      }),
    );
  });

  it("counters never go negative and the clock never goes back", () => {
    fc.assert(
      fc.property(session, (inputs) => {
        const states = runAll(inputs);
        states.forEach((state, i) => {
          for (const value of Object.values(state.counters)) expect(value).toBeGreaterThanOrEqual(0);
          if (i > 0) expect(state.clock).toBeGreaterThanOrEqual(states[i - 1].clock);
        });
      }),
    );
  });

  it("shown is danger whenever faulted or held, and the wanted aspect otherwise", () => {
    const looping: Rulebook = {
      ...rulebook,
      rules: [...rulebook.rules, { id: "loop", on: "standing", if: { count: "junction", op: ">", value: 1 }, do: [{ add: "junction", by: 1 }] }],
    };
    fc.assert(
      fc.property(session, (inputs) => {
        let state = initialState(looping);
        for (const event of inputs) {
          state = step(looping, state, event).state;
          const shown = shownAspects(looping, state);
          for (const id of ["M1", "B1"]) {
            if (state.faulted || state.held.includes(id)) expect(shown[id]).toBe("danger");
            else expect(shown[id]).toBe(state.wanted[id]);
          }
          expect([...state.held].sort()).toEqual(state.held);
        }
      }),
    );
  });

  it("never mutates its inputs", () => {
    fc.assert(
      fc.property(session, (inputs) => {
        const rulebookCopy = JSON.parse(JSON.stringify(rulebook));
        let state = initialState(rulebook);
        for (const event of inputs) {
          const stateCopy = structuredClone(state);
          const eventCopy = { ...event };
          const next = step(rulebook, state, event).state;
          expect(state).toEqual(stateCopy);
          expect(event).toEqual(eventCopy);
          state = next;
        }
        expect(rulebook).toEqual(rulebookCopy);
      }),
    );
  });

  it("the shown changes replay to the shown aspects", () => {
    fc.assert(
      fc.property(session, (inputs) => {
        let state = initialState(rulebook);
        const shown: Record<string, string> = shownAspects(rulebook, state);
        for (const event of inputs) {
          const result = step(rulebook, state, event);
          for (const change of result.changes) {
            if (change.kind !== "shown") continue;
            expect(shown[change.name]).toBe(change.from);
            shown[change.name] = change.to as string;
          }
          state = result.state;
          expect(shown).toEqual(shownAspects(rulebook, state));
        }
      }),
    );
  });
});
