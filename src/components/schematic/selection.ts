import type { ItemKind } from "./format";

/** What the editor has selected: one item, its label, a track, or one vertex of a track. */
export type Selection =
  | { type: "item"; kind: ItemKind; id: string }
  | { type: "label"; kind: ItemKind; id: string }
  | { type: "track"; track: number }
  | { type: "vertex"; track: number; vertex: number }
  | null;

export type EditorMode = { type: "select" } | { type: "draw"; line: string };

export const KIND_NOUN: Record<ItemKind, string> = { detectors: "Detector", signals: "Signal", points: "Points" };

export function sameSelection(a: Selection, b: Selection): boolean {
  return JSON.stringify(a) === JSON.stringify(b);
}
