/** Pure polyline arithmetic shared by the mimic and the schematic editor. */
import type { Pt } from "./format";

export function polylineLength(points: readonly Pt[]): number {
  let total = 0;
  for (let i = 1; i < points.length; i++) total += Math.hypot(points[i][0] - points[i - 1][0], points[i][1] - points[i - 1][1]);
  return total;
}

/** The point `distance` along a polyline (clamped to its ends). */
export function pointAlong(points: readonly Pt[], distance: number): Pt {
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
  return [points[points.length - 1][0], points[points.length - 1][1]];
}

/** Distance along the polyline of the point on it nearest to `p`, and how far `p` is from it. */
export function project(points: readonly Pt[], p: Pt): { along: number; gap: number } {
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
export function slice(points: readonly Pt[], from: number, to: number): Pt[] {
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

/** Index of the segment (its first vertex) nearest to `p`: where a new vertex is inserted. */
export function nearestSegment(points: readonly Pt[], p: Pt): number {
  let best = 0;
  let bestGap = Infinity;
  for (let i = 1; i < points.length; i++) {
    const gap = project([points[i - 1], points[i]], p).gap;
    if (gap < bestGap) {
      bestGap = gap;
      best = i - 1;
    }
  }
  return best;
}
