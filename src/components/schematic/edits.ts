/**
 * Pure edits of a drawing: the layout's records that have a place (detectors, signals,
 * points on their lines) together with the schematic. Every function returns a new
 * document; the editor keeps them in an undo history (history.ts).
 *
 * The records stay the truth: an item is drawn at its `at` on its line, so dragging it
 * changes `at` (and maybe `line`), and editing `at` in a table moves it on the drawing.
 */
import type { LayoutDetector, LayoutLine, LayoutPoints, LayoutSignal } from "@shared/layout/schema";
import { isPt, MAX_COORD, MAX_TRACK_POINTS, type ItemKind, type Pt, type Schematic, type SchematicTrack } from "./format";
import { nearestSegment, pointAlong, polylineLength, project } from "./polyline";
import { snapMetres, snapToGrid } from "./snap";
import { lineLengthEstimate, metresAtPoint, nearestTrack, pointAtMetres } from "./trackMetres";

/** Points may say how they are worked (CONTRACT.md §3); older files leave it out. */
export type DrawnPoints = LayoutPoints & { worked?: "power" | "hand" };

export interface DrawingDoc {
  lines: LayoutLine[];
  detectors: LayoutDetector[];
  signals: LayoutSignal[];
  points: DrawnPoints[];
  schematic: Schematic;
}

/** How close (drawing units) a drop must be to a track to land on it. */
export const DROP_DISTANCE = 40;

const clamp = (n: number) => Math.max(-MAX_COORD, Math.min(MAX_COORD, n));
const clampPt = (p: Pt): Pt => [clamp(p[0]), clamp(p[1])];

function itemsOf(doc: DrawingDoc, kind: ItemKind): { id: string; line: string; at: number }[] {
  return doc[kind];
}

/** The length a line is drawn for when a track gives no `metres`. */
export function lineLength(doc: DrawingDoc, line: string): number {
  return lineLengthEstimate(
    [...doc.detectors, ...doc.signals, ...doc.points].filter((x) => x.line === line).map((x) => x.at),
  );
}

/** Where an item's record puts it on the drawing (null when its line has no track). */
export function itemPoint(doc: DrawingDoc, kind: ItemKind, id: string): Pt | null {
  const item = itemsOf(doc, kind).find((x) => x.id === id);
  if (!item) return null;
  return pointAtMetres(doc.schematic.tracks, item.line, item.at, lineLength(doc, item.line));
}

/** Detectors (and signals, points) listed in line order, then by position along the line. */
export function sortByPosition<T extends { line: string; at: number }>(items: readonly T[], lines: readonly LayoutLine[]): T[] {
  const order = new Map(lines.map((l, i) => [l.id, i]));
  return [...items].sort((a, b) => (order.get(a.line) ?? Infinity) - (order.get(b.line) ?? Infinity) || a.at - b.at);
}

function replaceItem<K extends ItemKind>(doc: DrawingDoc, kind: K, id: string, patch: { line: string; at: number }): DrawingDoc {
  const list = (doc[kind] as { id: string; line: string; at: number }[]).map((x) => (x.id === id ? { ...x, ...patch } : x));
  return { ...doc, [kind]: sortByPosition(list, doc.lines) } as DrawingDoc;
}

/** Where a drawn point lands: the nearest track within reach, its line and position there. */
export function landing(doc: DrawingDoc, p: Pt, preferLine?: string): { line: string; at: number; track: number } | null {
  const tracks = doc.schematic.tracks;
  const any = nearestTrack(tracks, p);
  if (!any || any.gap > DROP_DISTANCE) return null;
  // Stay on one's own line unless another line is clearly nearer.
  const own = preferLine !== undefined ? nearestTrack(tracks, p, preferLine) : null;
  const chosen = own && own.gap <= any.gap + 8 ? own : any;
  const track = tracks[chosen.index];
  const { at } = metresAtPoint(track, p, lineLength(doc, track.line));
  return { line: track.line, at: snapMetres(at), track: chosen.index };
}

/** Drags an item to a drawn point: it lands on the nearest track, taking that line and position. */
export function moveItemTo(doc: DrawingDoc, kind: ItemKind, id: string, p: Pt, grid: number | null): DrawingDoc {
  const item = itemsOf(doc, kind).find((x) => x.id === id);
  if (!item) return doc;
  const target = landing(doc, grid ? snapToGrid(p, grid) : p, item.line);
  if (!target) return doc;
  if (target.line === item.line && target.at === item.at) return doc;
  return replaceItem(doc, kind, id, { line: target.line, at: target.at });
}

/** Sets an item's position in metres (as typed in its table): it moves on the drawing. */
export function setItemAt(doc: DrawingDoc, kind: ItemKind, id: string, at: number): DrawingDoc {
  const item = itemsOf(doc, kind).find((x) => x.id === id);
  if (!item || !Number.isFinite(at) || at < 0) return doc;
  return replaceItem(doc, kind, id, { line: item.line, at });
}

const PREFIX: Record<ItemKind, string> = { detectors: "D", signals: "S", points: "P" };
const NOUN: Record<ItemKind, string> = { detectors: "Detector", signals: "Signal", points: "Points" };

/** The first free id of the form D1, D2… (S… for signals, P… for points). */
export function freeId(doc: DrawingDoc, kind: ItemKind): string {
  const taken = new Set([...doc.detectors, ...doc.signals, ...doc.points].map((x) => x.id));
  for (let n = 1; ; n++) if (!taken.has(`${PREFIX[kind]}${n}`)) return `${PREFIX[kind]}${n}`;
}

/** A new item dropped from the palette onto a track. Null when the drop is not near a track. */
export function placeNewItem(doc: DrawingDoc, kind: ItemKind, p: Pt, grid: number | null): { doc: DrawingDoc; id: string } | null {
  const target = landing(doc, grid ? snapToGrid(p, grid) : p);
  if (!target) return null;
  const id = freeId(doc, kind);
  const base = { id, name: `${NOUN[kind]} ${id}`, line: target.line, at: target.at };
  if (kind === "detectors") return { id, doc: { ...doc, detectors: sortByPosition([...doc.detectors, base], doc.lines) } };
  if (kind === "signals") return { id, doc: { ...doc, signals: sortByPosition([...doc.signals, { ...base, aspects: ["danger", "clear"] }], doc.lines) } };
  return { id, doc: { ...doc, points: sortByPosition([...doc.points, { ...base, worked: "hand" as const }], doc.lines) } };
}

function withTracks(doc: DrawingDoc, tracks: SchematicTrack[]): DrawingDoc {
  return { ...doc, schematic: { ...doc.schematic, tracks } };
}

/** A new line's track is read at this many drawing units to the metre (as the automatic drawing). */
export const NEW_TRACK_UNITS_PER_METRE = 30;

/**
 * A new track for a line from drawn points. It spans 0 to the line's length when items are
 * already on the line (so they keep their positions), else its drawn length at
 * NEW_TRACK_UNITS_PER_METRE (600 units: 20 m); the span can be changed afterwards.
 */
export function addTrack(doc: DrawingDoc, line: string, points: Pt[]): DrawingDoc {
  const clean = points.filter(isPt).map(clampPt).slice(0, MAX_TRACK_POINTS);
  if (clean.length < 2 || !doc.lines.some((l) => l.id === line)) return doc;
  const occupied = [...doc.detectors, ...doc.signals, ...doc.points].some((x) => x.line === line);
  const lengthM = occupied ? lineLength(doc, line) : polylineLength(clean) / NEW_TRACK_UNITS_PER_METRE;
  return withTracks(doc, [...doc.schematic.tracks, { line, points: clean, metres: [0, snapMetres(lengthM, 0.5) || 1] }]);
}

export function removeTrack(doc: DrawingDoc, index: number): DrawingDoc {
  return withTracks(doc, doc.schematic.tracks.filter((_, i) => i !== index));
}

export function setTrackMetres(doc: DrawingDoc, index: number, metres: [number, number]): DrawingDoc {
  if (!metres.every(Number.isFinite) || metres[0] === metres[1] || metres.some((m) => m < 0)) return doc;
  return withTracks(doc, doc.schematic.tracks.map((t, i) => (i === index ? { ...t, metres } : t)));
}

export function moveVertex(doc: DrawingDoc, track: number, vertex: number, p: Pt, grid: number | null): DrawingDoc {
  const to = clampPt(grid ? snapToGrid(p, grid) : p);
  return withTracks(
    doc,
    doc.schematic.tracks.map((t, i) => (i === track ? { ...t, points: t.points.map((q, j) => (j === vertex ? to : q)) } : t)),
  );
}

/** A vertex added on the segment nearest `p` (to bend a track). */
export function insertVertex(doc: DrawingDoc, track: number, p: Pt, grid: number | null): DrawingDoc {
  const t = doc.schematic.tracks[track];
  if (!t || t.points.length >= MAX_TRACK_POINTS) return doc;
  const at = nearestSegment(t.points, p) + 1;
  const to = clampPt(grid ? snapToGrid(p, grid) : p);
  const points = [...t.points.slice(0, at), to, ...t.points.slice(at)];
  return withTracks(doc, doc.schematic.tracks.map((x, i) => (i === track ? { ...x, points } : x)));
}

/** Removes a vertex; a track keeps at least its two ends. */
export function removeVertex(doc: DrawingDoc, track: number, vertex: number): DrawingDoc {
  const t = doc.schematic.tracks[track];
  if (!t || t.points.length <= 2) return doc;
  return withTracks(doc, doc.schematic.tracks.map((x, i) => (i === track ? { ...x, points: x.points.filter((_, j) => j !== vertex) } : x)));
}

/** Moves an item's id label (offset from the item). */
export function moveLabel(doc: DrawingDoc, kind: ItemKind, id: string, offset: Pt): DrawingDoc {
  const o = clampPt(offset);
  return { ...doc, schematic: { ...doc.schematic, labelOffsets: { ...doc.schematic.labelOffsets, [kind]: { ...doc.schematic.labelOffsets[kind], [id]: o } } } };
}

/** Moves a signal's lamp relative to where the signal stands on its track. */
export function moveSignalLamp(doc: DrawingDoc, id: string, offset: Pt): DrawingDoc {
  return { ...doc, schematic: { ...doc.schematic, signalOffsets: { ...doc.schematic.signalOffsets, [id]: clampPt(offset) } } };
}

export function setFreeLabels(doc: DrawingDoc, labels: { text: string; at: Pt }[]): DrawingDoc {
  return { ...doc, schematic: { ...doc.schematic, labels } };
}

/**
 * Opens an older (version 1) drawing for editing without moving its tracks: every track gets
 * the `metres` it was drawn with, signals placed by hand keep their lamps (as offsets), and
 * detectors and points placed by hand go to where their `at` puts them (the records win).
 * Returns how many hand-placed items moved, so the editor can say so.
 */
export function migrateForEditing(doc: DrawingDoc): { doc: DrawingDoc; moved: number } {
  const s = doc.schematic;
  const tracks = s.tracks.map((t) => (t.metres ? t : { ...t, metres: [0, lineLength(doc, t.line)] as [number, number] }));
  const signalOffsets = { ...s.signalOffsets };
  for (const sig of doc.signals) {
    const pinned = s.pinned.signals[sig.id];
    if (!pinned) continue;
    const base = pointAtMetres(tracks, sig.line, sig.at, lineLength(doc, sig.line));
    if (base) signalOffsets[sig.id] = [pinned[0] - base[0], pinned[1] - base[1]];
  }
  const moved = Object.keys(s.pinned.detectors).length + Object.keys(s.pinned.points).length;
  return {
    moved,
    doc: { ...doc, schematic: { ...s, version: 2, tracks, signalOffsets, pinned: { detectors: {}, signals: {}, points: {} } } },
  };
}

/** The point on a track nearest `p` (where a dragged item is drawn while it moves). */
export function pointOnTrackNear(track: SchematicTrack, p: Pt): Pt {
  return pointAlong(track.points, project(track.points, p).along);
}
