/**
 * Where the mimic draws things: pure geometry from a layout, no React.
 *
 * ## The schematic (`layout.schematic`, optional, drawing units are arbitrary)
 * ```json
 * {
 *   "tracks":    [ { "line": "main", "points": [[20,160],[620,160]] } ],
 *   "detectors": { "MA": [100,160] },
 *   "signals":   { "M1": [300,185] },
 *   "points":    { "P1": [380,160] },
 *   "labels":    [ { "text": "to Fernmoor", "at": [20,200] } ]
 * }
 * ```
 * - `tracks`: one polyline per line (a line may have several). Lines without a track are
 *   drawn automatically (below).
 * - `detectors` / `signals` / `points`: explicit positions. Anything without one is placed
 *   on its line's first polyline at the fraction `at / lineLength` of the polyline's length,
 *   where `lineLength` is the largest `at` on that line plus 10 % (metres along the line map
 *   linearly onto the drawn track).
 * - A shorthand `lines: { [lineId]: { x0, y0, x1, y1 } }` is accepted as one straight track
 *   per line.
 * - The drawing is fitted to its content (the viewBox is the bounding box plus a margin), so
 *   `width`/`height` in a schematic are not needed.
 *
 * ## Automatic drawing (no schematic, or lines missing from it)
 * The first line is horizontal, metres to the right. Every other line is a branch that joins
 * the first line at its points: the n-th other line at the n-th points of the first line (in
 * metres order); the branch runs parallel above the main line and turns down to meet it at
 * the points, its far end (largest `at`) at the join. A line with no points to join is drawn
 * as a separate parallel track.
 */
import type { LayoutDetector, LayoutLine, LayoutPoints, LayoutSignal } from "../../../shared/layout/schema";

export type Pt = [number, number];

export interface MimicLayout {
  lines: LayoutLine[];
  detectors: LayoutDetector[];
  signals: LayoutSignal[];
  points: LayoutPoints[];
  schematic?: Record<string, unknown> | null;
}

export interface Geometry {
  /** Polylines per line id. */
  tracks: { line: string; points: Pt[] }[];
  detectors: Record<string, Pt>;
  signals: Record<string, Pt>;
  /** Where each detector's id is written, relative to the detector: below unless that is crowded. */
  detectorLabelDy: Record<string, number>;
  /** Where the signal stands on the track (the marker is drawn offset from it). */
  signalTrack: Record<string, Pt>;
  points: Record<string, Pt>;
  labels: { text: string; at: Pt }[];
  viewBox: { x: number; y: number; width: number; height: number };
}

const AUTO_PX_PER_METRE = 30;
const AUTO_BRANCH_RISE = 110;
const SIGNAL_OFFSET = 26;
const MARGIN = 40;
/** Width of one character of a 12-unit label in the mimic's monospace font. */
export const LABEL_CHAR_WIDTH = 7.5;
const DETECTOR_LABEL_BELOW = 24;
const DETECTOR_LABEL_ABOVE = -16;

function isPt(value: unknown): value is Pt {
  return Array.isArray(value) && value.length === 2 && value.every((n) => typeof n === "number" && Number.isFinite(n));
}

function ptRecord(value: unknown): Record<string, Pt> {
  const out: Record<string, Pt> = {};
  if (typeof value !== "object" || value === null) return out;
  for (const [key, pt] of Object.entries(value)) if (isPt(pt)) out[key] = pt;
  return out;
}

/** Reads the documented schematic shape, ignoring anything malformed. */
export function readSchematic(schematic: Record<string, unknown> | null | undefined) {
  const tracks: { line: string; points: Pt[] }[] = [];
  const s = schematic ?? {};
  if (Array.isArray(s.tracks)) {
    for (const t of s.tracks as unknown[]) {
      if (typeof t !== "object" || t === null) continue;
      const { line, points } = t as { line?: unknown; points?: unknown };
      if (typeof line === "string" && Array.isArray(points) && points.length >= 2 && points.every(isPt)) tracks.push({ line, points: points as Pt[] });
    }
  }
  if (typeof s.lines === "object" && s.lines !== null) {
    for (const [line, seg] of Object.entries(s.lines as Record<string, unknown>)) {
      const g = seg as { x0?: unknown; y0?: unknown; x1?: unknown; y1?: unknown };
      if ([g?.x0, g?.y0, g?.x1, g?.y1].every((n) => typeof n === "number")) {
        tracks.push({ line, points: [[g.x0 as number, g.y0 as number], [g.x1 as number, g.y1 as number]] });
      }
    }
  }
  const labels: { text: string; at: Pt }[] = [];
  if (Array.isArray(s.labels)) {
    for (const l of s.labels as unknown[]) {
      const { text, at } = (l ?? {}) as { text?: unknown; at?: unknown };
      if (typeof text === "string" && isPt(at)) labels.push({ text, at });
    }
  }
  return { tracks, detectors: ptRecord(s.detectors), signals: ptRecord(s.signals), points: ptRecord(s.points), labels };
}

export function polylineLength(points: Pt[]): number {
  let total = 0;
  for (let i = 1; i < points.length; i++) total += Math.hypot(points[i][0] - points[i - 1][0], points[i][1] - points[i - 1][1]);
  return total;
}

/** The point `distance` along a polyline (clamped to its ends). */
export function pointAlong(points: Pt[], distance: number): Pt {
  let left = Math.max(0, distance);
  for (let i = 1; i < points.length; i++) {
    const [ax, ay] = points[i - 1];
    const [bx, by] = points[i];
    const seg = Math.hypot(bx - ax, by - ay);
    if (left <= seg || i === points.length - 1) {
      const f = seg === 0 ? 0 : Math.min(1, left / seg);
      return [ax + (bx - ax) * f, ay + (by - ay) * f];
    }
    left -= seg;
  }
  return points[points.length - 1];
}

/** Distance along the polyline of the point on it nearest to `p`. */
export function project(points: Pt[], p: Pt): { along: number; gap: number } {
  let best = { along: 0, gap: Infinity };
  let walked = 0;
  for (let i = 1; i < points.length; i++) {
    const [ax, ay] = points[i - 1];
    const [bx, by] = points[i];
    const dx = bx - ax;
    const dy = by - ay;
    const seg2 = dx * dx + dy * dy;
    const f = seg2 === 0 ? 0 : Math.max(0, Math.min(1, ((p[0] - ax) * dx + (p[1] - ay) * dy) / seg2));
    const gap = Math.hypot(ax + dx * f - p[0], ay + dy * f - p[1]);
    if (gap < best.gap) best = { along: walked + Math.sqrt(seg2) * f, gap };
    walked += Math.sqrt(seg2);
  }
  return best;
}

/** The part of a polyline between two distances along it, in the order asked. */
export function slice(points: Pt[], from: number, to: number): Pt[] {
  const lo = Math.min(from, to);
  const hi = Math.max(from, to);
  const out: Pt[] = [pointAlong(points, lo)];
  let walked = 0;
  for (let i = 1; i < points.length; i++) {
    walked += Math.hypot(points[i][0] - points[i - 1][0], points[i][1] - points[i - 1][1]);
    if (walked > lo && walked < hi) out.push(points[i]);
  }
  out.push(pointAlong(points, hi));
  return from <= to ? out : out.reverse();
}

function lineLengthMetres(layout: MimicLayout, line: string): number {
  const ats = [...layout.detectors, ...layout.signals, ...layout.points].filter((x) => x.line === line).map((x) => x.at);
  return Math.max(1, ...ats) * 1.1;
}

function autoTracks(layout: MimicLayout, missing: LayoutLine[], existing: { line: string; points: Pt[] }[]): { line: string; points: Pt[] }[] {
  const out: { line: string; points: Pt[] }[] = [];
  const first = layout.lines[0];
  const firstTrack = existing.find((t) => t.line === first.id);
  const mainY = firstTrack ? firstTrack.points[0][1] : 0;
  if (!firstTrack) {
    out.push({ line: first.id, points: [[0, 0], [lineLengthMetres(layout, first.id) * AUTO_PX_PER_METRE, 0]] });
  }
  const mainPoly = firstTrack?.points ?? out[0].points;
  const mainLength = lineLengthMetres(layout, first.id);
  const joins = layout.points.filter((p) => p.line === first.id).sort((a, b) => a.at - b.at);
  let branchIndex = 0;
  let parallel = 1;
  for (const line of missing) {
    if (line.id === first.id) continue;
    const length = lineLengthMetres(layout, line.id) * AUTO_PX_PER_METRE;
    const join = joins[branchIndex++];
    if (join) {
      const joinPt = pointAlong(mainPoly, (join.at / mainLength) * polylineLength(mainPoly));
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
  const sch = readSchematic(layout.schematic);
  const known = new Set(layout.lines.map((l) => l.id));
  const tracks = sch.tracks.filter((t) => known.has(t.line));
  const missing = layout.lines.filter((l) => !tracks.some((t) => t.line === l.id));
  if (missing.length > 0 && layout.lines.length > 0) tracks.push(...autoTracks(layout, missing, tracks));

  const onLine = (line: string, at: number): Pt => {
    const track = tracks.find((t) => t.line === line);
    if (!track) return [0, 0];
    return pointAlong(track.points, (at / lineLengthMetres(layout, line)) * polylineLength(track.points));
  };

  const detectors: Record<string, Pt> = {};
  for (const d of layout.detectors) detectors[d.id] = sch.detectors[d.id] ?? onLine(d.line, d.at);
  const points: Record<string, Pt> = {};
  for (const p of layout.points) points[p.id] = sch.points[p.id] ?? onLine(p.line, p.at);
  const signals: Record<string, Pt> = {};
  const signalTrack: Record<string, Pt> = {};
  for (const s of layout.signals) {
    const base = onLine(s.line, s.at);
    const explicit = sch.signals[s.id];
    if (explicit) {
      signals[s.id] = explicit;
      // The track point nearest the drawn signal: where its post stands.
      const track = tracks.find((t) => t.line === s.line);
      signalTrack[s.id] = track ? pointAlong(track.points, project(track.points, explicit).along) : base;
    } else {
      signals[s.id] = [base[0], base[1] + SIGNAL_OFFSET];
      signalTrack[s.id] = base;
    }
  }

  // Labels are anchored at their start: count their width too (about 0.62 em per character).
  const labelEnds: Pt[] = sch.labels.map((l) => [l.at[0] + l.text.length * LABEL_CHAR_WIDTH, l.at[1]]);
  const all: Pt[] = [...tracks.flatMap((t) => t.points), ...Object.values(detectors), ...Object.values(signals), ...Object.values(points), ...sch.labels.map((l) => l.at), ...labelEnds];
  const xs = all.map((p) => p[0]);
  const ys = all.map((p) => p[1]);
  const minX = Math.min(0, ...xs) - MARGIN;
  const minY = Math.min(...ys, 0) - MARGIN;
  const maxX = Math.max(...xs, 100) + MARGIN;
  const maxY = Math.max(...ys, 0) + MARGIN;
  const detectorLabelDy: Record<string, number> = {};
  const obstacles: { x0: number; x1: number; y0: number; y1: number }[] = [
    ...Object.values(signals).map(([x, y]) => ({ x0: x - 30, x1: x + 30, y0: y - 30, y1: y + 30 })),
    ...sch.labels.map((l) => ({ x0: l.at[0], x1: l.at[0] + l.text.length * LABEL_CHAR_WIDTH, y0: l.at[1] - 12, y1: l.at[1] + 2 })),
  ];
  for (const [id, [x, y]] of Object.entries(detectors)) {
    // Tall enough for the display's larger lettering (scale 1.25) too.
    const below = { x0: x - 14, x1: x + 14, y0: y + DETECTOR_LABEL_BELOW - 12, y1: y + DETECTOR_LABEL_BELOW * 1.25 + 4 };
    const crowded = obstacles.some((o) => o.x0 < below.x1 && below.x0 < o.x1 && o.y0 < below.y1 && below.y0 < o.y1);
    detectorLabelDy[id] = crowded ? DETECTOR_LABEL_ABOVE : DETECTOR_LABEL_BELOW;
  }
  return {
    tracks,
    detectors,
    detectorLabelDy,
    signals,
    signalTrack,
    points,
    labels: sch.labels,
    viewBox: { x: minX, y: minY, width: maxX - minX, height: maxY - minY },
  };
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
