/**
 * Where the mimic draws things: pure geometry from a layout, no React. The mimic, the
 * visitor display, the simulator, replay and the schematic editor all draw from this.
 *
 * The schematic format (`layout.schematic`) is described in docs/schematic.md and read by
 * `../schematic/format.ts`. In short: tracks are polylines per line spanning `metres` of it;
 * every detector, signal and points sits on its line's track at its `at` (version 1 drawings
 * could also pin an item to a hand-placed point, which is still honoured); a signal's lamp
 * sits at `signalOffsets[id]` from its place on the track; id labels sit at `labelOffsets`,
 * or where `../schematic/labels.ts` finds them room.
 *
 * ## Automatic drawing (no schematic, or lines missing from it)
 * The first line is horizontal, metres to the right. Every other line is a branch that joins
 * the first line at its points: the n-th other line at the n-th points of the first line (in
 * metres order); the branch runs parallel above the main line and turns down to meet it at
 * the points, its far end (largest `at`) at the join. A line with no points to join is drawn
 * as a separate parallel track.
 */
import type { LayoutDetector, LayoutLine, LayoutPoints, LayoutSignal } from "@shared/layout/schema";
import { ITEM_KINDS, parseSchematic, type ItemKind, type Pt, type SchematicTrack } from "../schematic/format";
import { LABEL_CANDIDATES, LABEL_CHAR_WIDTH, markBox, placeLabels, textBox, type Box, type LabelRequest } from "../schematic/labels";
import { pointAlong, project, slice } from "../schematic/polyline";
import { lineLengthEstimate, pointAtMetres } from "../schematic/trackMetres";

export type { Pt } from "../schematic/format";
export { pointAlong, polylineLength, project, slice } from "../schematic/polyline";
export { LABEL_CHAR_WIDTH } from "../schematic/labels";

export interface MimicLayout {
  lines: LayoutLine[];
  detectors: LayoutDetector[];
  signals: LayoutSignal[];
  points: LayoutPoints[];
  schematic?: Record<string, unknown> | null;
}

export interface Geometry {
  /** Polylines per line id, with the metres each spans when the drawing says. */
  tracks: SchematicTrack[];
  detectors: Record<string, Pt>;
  /** Where each signal's lamp is drawn. */
  signals: Record<string, Pt>;
  /** Where the signal stands on the track (the lamp is drawn offset from it). */
  signalTrack: Record<string, Pt>;
  points: Record<string, Pt>;
  /** Each item's id label relative to the item (detector, points, or the signal's lamp), keyed `kind:id`. */
  labelOffsets: Record<string, Pt>;
  labels: { text: string; at: Pt }[];
  viewBox: { x: number; y: number; width: number; height: number };
}

const AUTO_PX_PER_METRE = 30;
const AUTO_BRANCH_RISE = 110;
/** A signal's lamp is drawn this far from the track unless the drawing says otherwise. */
export const SIGNAL_OFFSET = 26;
const MARGIN = 40;
/** Font sizes of the mimic's id labels (drawing units at panel size). */
export const LABEL_FONT: Record<ItemKind, number> = { detectors: 12, points: 11, signals: 15 };
const ASPECT_WORD_FONT = 11;

export function labelKey(kind: ItemKind, id: string): string {
  return `${kind}:${id}`;
}

function lineLengthMetres(layout: MimicLayout, line: string): number {
  return lineLengthEstimate([...layout.detectors, ...layout.signals, ...layout.points].filter((x) => x.line === line).map((x) => x.at));
}

function autoTracks(layout: MimicLayout, missing: LayoutLine[], existing: SchematicTrack[]): SchematicTrack[] {
  const out: SchematicTrack[] = [];
  const first = layout.lines[0];
  const firstTrack = existing.find((t) => t.line === first.id);
  const mainY = firstTrack ? firstTrack.points[0][1] : 0;
  if (!firstTrack) {
    out.push({ line: first.id, points: [[0, 0], [lineLengthMetres(layout, first.id) * AUTO_PX_PER_METRE, 0]] });
  }
  const mainTrack = firstTrack ?? out[0];
  const mainLength = lineLengthMetres(layout, first.id);
  const joins = layout.points.filter((p) => p.line === first.id).sort((a, b) => a.at - b.at);
  let branchIndex = 0;
  let parallel = 1;
  for (const line of missing) {
    if (line.id === first.id) continue;
    const length = lineLengthMetres(layout, line.id) * AUTO_PX_PER_METRE;
    const join = joins[branchIndex++];
    if (join) {
      const joinPt = pointAtMetres([mainTrack], first.id, join.at, mainLength) ?? [0, 0];
      const rise = AUTO_BRANCH_RISE * (1 + Math.floor((branchIndex - 1) / 2));
      const turn = Math.min(length * 0.4, rise);
      // Alternate above and below the main line so two branches do not overlap.
      const dir = branchIndex % 2 === 1 ? -1 : 1;
      const y = mainY + dir * rise;
      out.push({ line: line.id, points: [[joinPt[0] - length, y], [joinPt[0] - turn, y], joinPt] });
    } else {
      const y = mainY + AUTO_BRANCH_RISE * 2 * parallel++;
      out.push({ line: line.id, points: [[0, y], [length, y]] });
    }
  }
  return out;
}

/** Every drawn position of a layout: schematic where given, automatic elsewhere. */
export function layoutGeometry(layout: MimicLayout): Geometry {
  const sch = parseSchematic(layout.schematic);
  const known = new Set(layout.lines.map((l) => l.id));
  const tracks = sch.tracks.filter((t) => known.has(t.line));
  const missing = layout.lines.filter((l) => !tracks.some((t) => t.line === l.id));
  if (missing.length > 0 && layout.lines.length > 0) tracks.push(...autoTracks(layout, missing, tracks));

  const lengths = new Map(layout.lines.map((l) => [l.id, lineLengthMetres(layout, l.id)]));
  const onLine = (line: string, at: number): Pt => pointAtMetres(tracks, line, at, lengths.get(line) ?? 1) ?? [0, 0];

  const detectors: Record<string, Pt> = {};
  for (const d of layout.detectors) detectors[d.id] = sch.pinned.detectors[d.id] ?? onLine(d.line, d.at);
  const points: Record<string, Pt> = {};
  for (const p of layout.points) points[p.id] = sch.pinned.points[p.id] ?? onLine(p.line, p.at);
  const signals: Record<string, Pt> = {};
  const signalTrack: Record<string, Pt> = {};
  for (const s of layout.signals) {
    const base = onLine(s.line, s.at);
    const pinned = sch.pinned.signals[s.id];
    if (pinned) {
      signals[s.id] = pinned;
      // The track point nearest the drawn signal: where its post stands.
      const track = tracks.find((t) => t.line === s.line);
      signalTrack[s.id] = track ? pointAlong(track.points, project(track.points, pinned).along) : base;
    } else {
      const offset = sch.signalOffsets[s.id] ?? [0, SIGNAL_OFFSET];
      signals[s.id] = [base[0] + offset[0], base[1] + offset[1]];
      signalTrack[s.id] = base;
    }
  }

  const labelOffsets = placeItemLabels(layout, sch.labelOffsets, { detectors, signals, points }, signalTrack, sch.labels);

  // Free labels are anchored at their start: count their width too.
  const labelEnds: Pt[] = sch.labels.map((l) => [l.at[0] + l.text.length * LABEL_CHAR_WIDTH, l.at[1]]);
  const all: Pt[] = [...tracks.flatMap((t) => t.points), ...Object.values(detectors), ...Object.values(signals), ...Object.values(points), ...sch.labels.map((l) => l.at), ...labelEnds];
  for (const kind of ITEM_KINDS) {
    const at = { detectors, signals, points }[kind];
    for (const [id, p] of Object.entries(at)) {
      const o = labelOffsets[labelKey(kind, id)];
      if (o) all.push([p[0] + o[0] + id.length * LABEL_CHAR_WIDTH * 1.4, p[1] + o[1]], [p[0] + o[0] - id.length * LABEL_CHAR_WIDTH, p[1] + o[1]]);
    }
  }
  const xs = all.map((p) => p[0]);
  const ys = all.map((p) => p[1]);
  const minX = Math.min(0, ...xs) - MARGIN;
  const minY = Math.min(...ys, 0) - MARGIN;
  const maxX = Math.max(...xs, 100) + MARGIN;
  const maxY = Math.max(...ys, 0) + MARGIN;
  return { tracks, detectors, signals, signalTrack, points, labelOffsets, labels: sch.labels, viewBox: { x: minX, y: minY, width: maxX - minX, height: maxY - minY } };
}

/** Offset of a signal's aspect word from its lamp: on the side away from the track. */
export function aspectWordDy(lamp: Pt, post: Pt, scale = 1): number {
  const r = 11 * scale;
  return lamp[1] >= post[1] ? r + 16 * scale : -r - 8 * scale;
}

/** Id labels placed by hand where the drawing says, the rest where nothing else is drawn. */
function placeItemLabels(
  layout: MimicLayout,
  placed: Record<ItemKind, Record<string, Pt>>,
  at: Record<ItemKind, Record<string, Pt>>,
  signalTrack: Record<string, Pt>,
  freeLabels: { text: string; at: Pt }[],
): Record<string, Pt> {
  const out: Record<string, Pt> = {};
  const obstacles: Box[] = [];
  for (const kind of ITEM_KINDS) for (const p of Object.values(at[kind])) obstacles.push(markBox(kind, p));
  for (const s of layout.signals) {
    const lamp = at.signals[s.id];
    if (!lamp) continue;
    // The aspect word under (or over) the lamp, as wide as its longest form.
    obstacles.push(textBox("HELD · CAUTION", [lamp[0], lamp[1] + aspectWordDy(lamp, signalTrack[s.id] ?? lamp, 1.25)], ASPECT_WORD_FONT * 1.25, "middle"));
  }
  for (const l of freeLabels) obstacles.push(textBox(l.text, l.at, 12 * 1.25, "start"));
  const requests: LabelRequest[] = [];
  for (const kind of ITEM_KINDS) {
    const items = kind === "detectors" ? layout.detectors : kind === "signals" ? layout.signals : layout.points;
    for (const item of items) {
      const anchor = at[kind][item.id];
      if (!anchor) continue;
      const fixed = placed[kind][item.id];
      if (fixed) {
        out[labelKey(kind, item.id)] = fixed;
        obstacles.push(textBox(item.id, [anchor[0] + fixed[0] * 1.25, anchor[1] + fixed[1] * 1.25], LABEL_FONT[kind] * 1.25, kind === "signals" ? "start" : "middle"));
      } else {
        requests.push({ kind, id: item.id, anchor, fontSize: LABEL_FONT[kind], textAnchor: kind === "signals" ? "start" : "middle", candidates: LABEL_CANDIDATES[kind] });
      }
    }
  }
  return { ...out, ...placeLabels(requests, obstacles) };
}

/**
 * The drawn path between two detectors: along their line, or, when they are on different
 * lines, along the first line to where its track meets the second (the track end nearest the
 * other line), then along the second.
 */
export function pathBetween(geometry: Geometry, layout: MimicLayout, fromDetector: string, toDetector: string): Pt[] {
  const a = layout.detectors.find((d) => d.id === fromDetector);
  const b = layout.detectors.find((d) => d.id === toDetector);
  const pa = geometry.detectors[fromDetector];
  const pb = geometry.detectors[toDetector];
  if (!a || !b || !pa || !pb) return [];
  const ta = geometry.tracks.find((t) => t.line === a.line)?.points;
  const tb = geometry.tracks.find((t) => t.line === b.line)?.points;
  if (!ta || !tb) return [pa, pb];
  if (a.line === b.line) return slice(ta, project(ta, pa).along, project(ta, pb).along);
  // Which end of A's track (or B's) touches the other line: that is the junction.
  const endsA: Pt[] = [ta[0], ta[ta.length - 1]];
  const endsB: Pt[] = [tb[0], tb[tb.length - 1]];
  const candidates = [...endsA.map((p) => ({ p, gap: project(tb, p).gap })), ...endsB.map((p) => ({ p, gap: project(ta, p).gap }))];
  const join = candidates.sort((x, y) => x.gap - y.gap)[0].p;
  return [...slice(ta, project(ta, pa).along, project(ta, join).along), ...slice(tb, project(tb, join).along, project(tb, pb).along)];
}
