import { useCallback, useMemo, useReducer } from "react";
import type { EngineInput } from "@shared/rulebook/engine";
import type { Rulebook } from "@shared/rulebook/schema";
import { applyInput, startEntry, type SimEntry } from "../lib/simulation";

interface SimState {
  rulebook: Rulebook | null;
  /** Every state reached, the start first; stepping back only moves the cursor. */
  history: SimEntry[];
  cursor: number;
}

type SimAction =
  | { type: "reset"; rulebook: Rulebook; entries?: SimEntry[]; cursor?: number }
  | { type: "apply"; input: EngineInput }
  | { type: "goto"; index: number };

function reducer(sim: SimState, action: SimAction): SimState {
  switch (action.type) {
    case "reset": {
      const history = action.entries ?? [startEntry(action.rulebook)];
      return { rulebook: action.rulebook, history, cursor: Math.min(action.cursor ?? 0, history.length - 1) };
    }
    case "apply": {
      if (!sim.rulebook) return sim;
      // A new input after stepping back starts a new branch: the old future is dropped.
      const past = sim.history.slice(0, sim.cursor + 1);
      const entry = applyInput(sim.rulebook, past[past.length - 1].state, action.input);
      return { ...sim, history: [...past, entry], cursor: past.length };
    }
    case "goto":
      return { ...sim, cursor: Math.max(0, Math.min(action.index, sim.history.length - 1)) };
  }
}

/** The simulator's history of engine states over one rulebook, with a movable cursor. */
export function useSimulation() {
  const [sim, dispatch] = useReducer(reducer, { rulebook: null, history: [], cursor: 0 });

  const reset = useCallback((rulebook: Rulebook, entries?: SimEntry[], cursor?: number) => dispatch({ type: "reset", rulebook, entries, cursor }), []);
  const apply = useCallback((input: EngineInput) => dispatch({ type: "apply", input }), []);
  const goto = useCallback((index: number) => dispatch({ type: "goto", index }), []);

  const current = sim.history[sim.cursor] ?? null;
  return useMemo(
    () => ({ rulebook: sim.rulebook, history: sim.history, cursor: sim.cursor, current, reset, apply, goto }),
    [sim, current, reset, apply, goto],
  );
}
