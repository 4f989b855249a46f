/**
 * The schematic stored in a layout file (`layout.schematic`): how the junction is drawn.
 * docs/schematic.md describes it for people; this module reads and writes it.
 *
 * Reading is forgiving (anything malformed is ignored, so an old or hand-written file still
 * draws); writing is canonical (the editor always writes version 2, keys in one order).
 */
export type Pt = [number, number];

/** One drawn stretch of a line: a polyline, and which metres of the line it spans. */
export interface SchematicTrack {
  line: string;
  points: Pt[];
  /**
   * Metres of the line at the polyline's first and last point; positions between map
   * linearly along the drawn length. Absent (version 1): 0 to the line's length estimate.
   */
  metres?: [number, number];
}

export type ItemKind = "detectors" | "signals" | "points";
export const ITEM_KINDS: readonly ItemKind[] = ["detectors", "signals", "points"];

export interface Schematic {
  version: 1 | 2;
  /** Drawing units per grid step in the editor. */
  grid: number;
  tracks: SchematicTrack[];
  /** Version 1 only: items drawn where placed by hand, not where their `at` puts them. */
  pinned: Record<ItemKind, Record<string, Pt>>;
  /** A signal's lamp relative to where it stands on its track (version 2). */
  signalOffsets: Record<string, Pt>;
  /** An item's id label relative to the item's drawn position (version 2). */
  labelOffsets: Record<ItemKind, Record<string, Pt>>;
  /** Free text on the drawing ("to Fernmoor"), anchored at the start of the text. */
  labels: { text: string; at: Pt }[];
}

export const SCHEMATIC_VERSION = 2;
export const DEFAULT_GRID = 20;
/** Bounds on what the editor accepts, so a stored drawing stays small and finite. */
export const MAX_COORD = 100_000;
export const MAX_TRACK_POINTS = 200;

export function isPt(value: unknown): value is Pt {
  return Array.isArray(value) && value.length === 2 && value.every((n) => typeof n === "number" && Number.isFinite(n) && Math.abs(n) <= MAX_COORD);
}

function ptRecord(value: unknown): Record<string, Pt> {
  const out: Record<string, Pt> = {};
  if (typeof value !== "object" || value === null || Array.isArray(value)) return out;
  for (const [key, pt] of Object.entries(value)) if (isPt(pt)) out[key] = [pt[0], pt[1]];
  return out;
}

function kindRecords(value: unknown): Record<ItemKind, Record<string, Pt>> {
  const v = (typeof value === "object" && value !== null ? value : {}) as Record<string, unknown>;
  return { detectors: ptRecord(v.detectors), signals: ptRecord(v.signals), points: ptRecord(v.points) };
}

export function emptySchematic(): Schematic {
  return {
    version: SCHEMATIC_VERSION,
    grid: DEFAULT_GRID,
    tracks: [],
    pinned: { detectors: {}, signals: {}, points: {} },
    signalOffsets: {},
    labelOffsets: { detectors: {}, signals: {}, points: {} },
    labels: [],
  };
}

/** Reads version 1 or 2 (and the `lines: {id: {x0,y0,x1,y1}}` shorthand), ignoring anything malformed. */
export function parseSchematic(raw: unknown): Schematic {
  const s = (typeof raw === "object" && raw !== null && !Array.isArray(raw) ? raw : {}) as Record<string, unknown>;
  const out = emptySchematic();
  out.version = s.version === SCHEMATIC_VERSION ? SCHEMATIC_VERSION : 1;
  if (typeof s.grid === "number" && Number.isFinite(s.grid) && s.grid >= 2 && s.grid <= 200) out.grid = s.grid;
  if (Array.isArray(s.tracks)) {
    for (const t of s.tracks as unknown[]) {
      if (typeof t !== "object" || t === null) continue;
      const { line, points, metres } = t as { line?: unknown; points?: unknown; metres?: unknown };
      if (typeof line !== "string" || !Array.isArray(points) || points.length < 2 || !points.every(isPt)) continue;
      const track: SchematicTrack = { line, points: (points as Pt[]).map((p) => [p[0], p[1]]) };
      if (Array.isArray(metres) && metres.length === 2 && metres.every((m) => typeof m === "number" && Number.isFinite(m)) && metres[0] !== metres[1]) {
        track.metres = [metres[0], metres[1]];
      }
      out.tracks.push(track);
    }
  }
  if (typeof s.lines === "object" && s.lines !== null) {
    for (const [line, seg] of Object.entries(s.lines as Record<string, unknown>)) {
      const g = (seg ?? {}) as { x0?: unknown; y0?: unknown; x1?: unknown; y1?: unknown };
      const a: unknown = [g.x0, g.y0];
      const b: unknown = [g.x1, g.y1];
      if (isPt(a) && isPt(b)) out.tracks.push({ line, points: [a, b] });
    }
  }
  out.pinned = kindRecords({ detectors: s.detectors, signals: s.signals, points: s.points });
  out.signalOffsets = ptRecord(s.signalOffsets);
  out.labelOffsets = kindRecords(s.labelOffsets);
  if (Array.isArray(s.labels)) {
    for (const l of s.labels as unknown[]) {
      const { text, at } = (l ?? {}) as { text?: unknown; at?: unknown };
      if (typeof text === "string" && text.length > 0 && text.length <= 120 && isPt(at)) out.labels.push({ text, at: [at[0], at[1]] });
    }
  }
  return out;
}

const round = (n: number) => Math.round(n * 100) / 100;
const roundPt = (p: Pt): Pt => [round(p[0]), round(p[1])];

function sortedRecord(record: Record<string, Pt>, keep: (id: string) => boolean): Record<string, Pt> {
  const out: Record<string, Pt> = {};
  for (const id of Object.keys(record).sort()) if (keep(id)) out[id] = roundPt(record[id]);
  return out;
}

/**
 * Version 2 as stored: keys in one order, coordinates rounded to 0.01, entries for items
 * that no longer exist dropped. Pinned positions are never written (items sit at their `at`).
 */
export function serializeSchematic(s: Schematic, ids: Record<ItemKind, readonly string[]>): Record<string, unknown> {
  const has = (kind: ItemKind) => {
    const set = new Set(ids[kind]);
    return (id: string) => set.has(id);
  };
  const labelOffsets: Record<string, Record<string, Pt>> = {};
  for (const kind of ITEM_KINDS) {
    const rec = sortedRecord(s.labelOffsets[kind], has(kind));
    if (Object.keys(rec).length > 0) labelOffsets[kind] = rec;
  }
  return {
    version: SCHEMATIC_VERSION,
    grid: s.grid,
    tracks: s.tracks.map((t) => ({ line: t.line, points: t.points.map(roundPt), ...(t.metres ? { metres: [round(t.metres[0]), round(t.metres[1])] } : {}) })),
    signalOffsets: sortedRecord(s.signalOffsets, has("signals")),
    labelOffsets,
    labels: s.labels.map((l) => ({ text: l.text, at: roundPt(l.at) })),
  };
}
