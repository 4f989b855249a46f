/**
 * An undo/redo stack of whole documents (immutable values). Pure: every operation returns
 * a new history. Edits that continue one gesture (a drag) replace the top entry instead of
 * stacking one per pointer move, so one undo takes back the whole drag.
 *
 * @example
 * let h = startHistory({ n: 0 });
 * h = record(h, { n: 1 });
 * h = undo(h); // h.present is { n: 0 }
 */
export interface History<T> {
  past: T[];
  present: T;
  future: T[];
  /** The gesture the present entry belongs to, if it may still be extended. */
  gesture: string | null;
}

/** Enough for a long session of editing; older steps drop off. */
export const HISTORY_LIMIT = 200;

export function startHistory<T>(present: T): History<T> {
  return { past: [], present, future: [], gesture: null };
}

/** A new present. With the same `gesture` as the last record, the last step is extended instead. */
export function record<T>(h: History<T>, next: T, gesture: string | null = null): History<T> {
  if (Object.is(next, h.present)) return h;
  if (gesture !== null && gesture === h.gesture) return { ...h, present: next, future: [] };
  const past = [...h.past, h.present];
  if (past.length > HISTORY_LIMIT) past.splice(0, past.length - HISTORY_LIMIT);
  return { past, present: next, future: [], gesture };
}

/** Ends the current gesture: the next edit is a step of its own. */
export function endGesture<T>(h: History<T>): History<T> {
  return h.gesture === null ? h : { ...h, gesture: null };
}

export function canUndo<T>(h: History<T>): boolean {
  return h.past.length > 0;
}

export function canRedo<T>(h: History<T>): boolean {
  return h.future.length > 0;
}

export function undo<T>(h: History<T>): History<T> {
  if (h.past.length === 0) return h;
  return { past: h.past.slice(0, -1), present: h.past[h.past.length - 1], future: [h.present, ...h.future], gesture: null };
}

export function redo<T>(h: History<T>): History<T> {
  if (h.future.length === 0) return h;
  return { past: [...h.past, h.present], present: h.future[0], future: h.future.slice(1), gesture: null };
}
