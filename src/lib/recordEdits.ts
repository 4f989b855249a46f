/**
 * Adding, changing and removing records of a layout draft, keeping references whole: a
 * renamed detector stays served by its node, a removed signal leaves no node pointing at
 * it, a renamed line takes its detectors, signals, points and tracks with it.
 */
import type { ItemKind } from "../components/schematic/format";
import { sortByPosition } from "../components/schematic/edits";
import type { LayoutDraft } from "./layoutDraft";

export type RecordKind = "lines" | ItemKind | "nodes";

type Row<K extends RecordKind> = LayoutDraft[K][number];

function renameIn(list: readonly string[] | undefined, from: string, to: string | null): string[] | undefined {
  if (!list) return list;
  return to === null ? list.filter((x) => x !== from) : list.map((x) => (x === from ? to : x));
}

function renameKey<V>(record: Record<string, V>, from: string, to: string | null): Record<string, V> {
  if (!(from in record)) return record;
  const { [from]: value, ...rest } = record;
  return to === null ? rest : { ...rest, [to]: value };
}

/** Follows a changed (`to`) or removed (`to` null) id through every reference to it. */
function followId(draft: LayoutDraft, kind: RecordKind, from: string, to: string | null): LayoutDraft {
  if (from === to) return draft;
  if (kind === "lines") {
    const line = <X extends { line: string }>(x: X): X => (x.line === from && to !== null ? { ...x, line: to } : x);
    return {
      ...draft,
      detectors: draft.detectors.map(line),
      signals: draft.signals.map(line),
      points: draft.points.map(line),
      schematic: { ...draft.schematic, tracks: draft.schematic.tracks.filter((t) => to !== null || t.line !== from).map(line) },
    };
  }
  if (kind === "nodes") return draft;
  const nodes = draft.nodes.map((n) => {
    if (kind === "points") return n.points ? { ...n, points: renameIn(n.points, from, to) } : n;
    return { ...n, [kind]: renameIn(n[kind], from, to) };
  });
  const s = draft.schematic;
  const schematic = {
    ...s,
    labelOffsets: { ...s.labelOffsets, [kind]: renameKey(s.labelOffsets[kind], from, to) },
    signalOffsets: kind === "signals" ? renameKey(s.signalOffsets, from, to) : s.signalOffsets,
  };
  return { ...draft, nodes, schematic };
}

function ordered(draft: LayoutDraft): LayoutDraft {
  return {
    ...draft,
    detectors: sortByPosition(draft.detectors, draft.lines),
    signals: sortByPosition(draft.signals, draft.lines),
    points: sortByPosition(draft.points, draft.lines),
  };
}

/** Adds (`index` null) or replaces a record; detectors, signals and points stay in position order. */
export function saveRecord<K extends RecordKind>(draft: LayoutDraft, kind: K, index: number | null, row: Row<K>, previousId: string | null): LayoutDraft {
  const list = draft[kind] as Row<K>[];
  const next = index === null ? [...list, row] : list.map((r, i) => (i === index ? row : r));
  let out = { ...draft, [kind]: next } as LayoutDraft;
  if (previousId !== null) out = followId(out, kind, previousId, row.id);
  return ordered(out);
}

export function removeRecord(draft: LayoutDraft, kind: RecordKind, index: number): LayoutDraft {
  const list = draft[kind] as { id: string }[];
  const gone = list[index];
  if (!gone) return draft;
  const out = { ...draft, [kind]: list.filter((_, i) => i !== index) } as LayoutDraft;
  return followId(out, kind, gone.id, null);
}

/** Why a line cannot go yet (something still stands on it), or null. */
export function lineInUse(draft: LayoutDraft, line: string): string | null {
  const on = [...draft.detectors, ...draft.signals, ...draft.points].filter((x) => x.line === line).map((x) => x.id);
  return on.length > 0 ? `Line ${line} still has ${on.join(", ")} on it: move or remove them first.` : null;
}
