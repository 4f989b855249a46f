/**
 * Metres along a line ↔ points on its drawn tracks. A track spans `metres: [from, to]` of
 * its line; a position `at` between them sits at the same fraction of the polyline's drawn
 * length. Tracks without `metres` (version 1 drawings) span 0 to the line's length estimate.
 *
 * @example
 * const track = { line: "main", points: [[0, 0], [400, 0]], metres: [0, 20] };
 * pointAtMetres([track], "main", 5, 22); // [100, 0]
 * metresAtPoint(track, [100, 30], 22);   // { at: 5, gap: 30, along: 100 }
 */
import { pointAlong, polylineLength, project } from "./polyline";
import type { Pt, SchematicTrack } from "./format";

/** Drawn lines get this much beyond their furthest item, so nothing sits on a track's very end. */
export const LINE_LENGTH_ALLOWANCE = 1.1;

/** The length a line is drawn for when no track says otherwise: its furthest item plus 10 %. */
export function lineLengthEstimate(ats: readonly number[]): number {
  return Math.max(1, ...ats) * LINE_LENGTH_ALLOWANCE;
}

export function trackSpan(track: SchematicTrack, fallbackLengthM: number): [number, number] {
  return track.metres ?? [0, fallbackLengthM];
}

/** Where `at` (metres) falls on this one track, clamped to its ends. */
export function pointOnTrack(track: SchematicTrack, at: number, fallbackLengthM: number): Pt {
  const [from, to] = trackSpan(track, fallbackLengthM);
  const fraction = (at - from) / (to - from);
  return pointAlong(track.points, fraction * polylineLength(track.points));
}

function covers(track: SchematicTrack, at: number, fallbackLengthM: number): boolean {
  const [from, to] = trackSpan(track, fallbackLengthM);
  return at >= Math.min(from, to) && at <= Math.max(from, to);
}

/**
 * The drawn point of position `at` on `line`: on the first of its tracks that spans `at`,
 * else on its first track (clamped). Null when the line has no track.
 */
export function pointAtMetres(tracks: readonly SchematicTrack[], line: string, at: number, fallbackLengthM: number): Pt | null {
  const own = tracks.filter((t) => t.line === line);
  if (own.length === 0) return null;
  const track = own.find((t) => covers(t, at, fallbackLengthM)) ?? own[0];
  return pointOnTrack(track, at, fallbackLengthM);
}

/** The position (metres) on this track nearest to a drawn point, and how far off the track the point is. */
export function metresAtPoint(track: SchematicTrack, p: Pt, fallbackLengthM: number): { at: number; gap: number; along: number } {
  const [from, to] = trackSpan(track, fallbackLengthM);
  const length = polylineLength(track.points);
  const { along, gap } = project(track.points, p);
  const at = length === 0 ? from : from + (along / length) * (to - from);
  return { at, gap, along };
}

/** The track nearest to a drawn point (optionally only those of one line). */
export function nearestTrack(tracks: readonly SchematicTrack[], p: Pt, line?: string): { index: number; gap: number } | null {
  let best: { index: number; gap: number } | null = null;
  tracks.forEach((t, index) => {
    if (line !== undefined && t.line !== line) return;
    const { gap } = project(t.points, p);
    if (!best || gap < best.gap) best = { index, gap };
  });
  return best;
}
