import { useCallback, useState } from "react";
import { canRedo, canUndo, endGesture, record, redo, startHistory, undo, type History } from "../components/schematic/history";

/**
 * An undoable draft: `change` records a step (or extends the current gesture, e.g. a drag),
 * `reset` starts over from a saved version. `dirty` compares with what was last saved.
 */
export function useDraftHistory<T>() {
  const [state, setState] = useState<{ history: History<T>; saved: T } | null>(null);
  const reset = useCallback((draft: T) => setState({ history: startHistory(draft), saved: draft }), []);
  const change = useCallback((next: T, gesture: string | null = null) => setState((s) => (s ? { ...s, history: record(s.history, next, gesture) } : s)), []);
  const finishGesture = useCallback(() => setState((s) => (s ? { ...s, history: endGesture(s.history) } : s)), []);
  const back = useCallback(() => setState((s) => (s ? { ...s, history: undo(s.history) } : s)), []);
  const forward = useCallback(() => setState((s) => (s ? { ...s, history: redo(s.history) } : s)), []);
  return {
    draft: state?.history.present ?? null,
    dirty: state ? state.history.present !== state.saved : false,
    canUndo: state ? canUndo(state.history) : false,
    canRedo: state ? canRedo(state.history) : false,
    reset,
    change,
    finishGesture,
    undo: back,
    redo: forward,
  };
}
