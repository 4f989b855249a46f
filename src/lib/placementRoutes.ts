/**
 * The distances of a layout's own routes that detector placement is about, from its records
 * and the rulebook's proving routes: approach detector to signal, and the clearance detector
 * (a route's last exit) against the fouling point beyond the junction's points.
 */
import type { LayoutDetector, LayoutPoints, LayoutSignal } from "../../shared/layout/schema";
import type { ProvingRoute } from "../../shared/rulebook/schema";

export interface PlacementRecords {
  detectors: LayoutDetector[];
  signals: LayoutSignal[];
  points: LayoutPoints[];
}

export interface RouteDistances {
  route: string;
  signal: LayoutSignal | undefined;
  approach: LayoutDetector | undefined;
  /** Metres from the first approach detector to the signal; null when they are on different lines. */
  approachM: number | null;
  /** Travel along increasing metres ("up") or decreasing ("down"), judged from approach to signal. */
  direction: "up" | "down";
  clearance: {
    detector: LayoutDetector;
    /** The points the route passes before its clearance detector (on that detector's line). */
    points: LayoutPoints | undefined;
    /** Where the train next stops beyond the junction: the route's last exit when it has more than one. */
    nextStopAt: number | undefined;
  } | null;
}

export function routeDistances(records: PlacementRecords, routes: readonly ProvingRoute[]): RouteDistances[] {
  const det = new Map(records.detectors.map((d) => [d.id, d]));
  const sig = new Map(records.signals.map((s) => [s.id, s]));
  return routes.map((route) => {
    const signal = sig.get(route.signal);
    const approach = det.get(route.approach[0]);
    const sameLine = signal && approach && signal.line === approach.line;
    const direction = sameLine && signal.at < approach.at ? "down" : "up";
    const exits = route.exit.map((id) => det.get(id)).filter((d): d is LayoutDetector => d !== undefined);
    // The clearance detector is the first exit beyond the fouling point; the last exit may be a road's end.
    const clearanceDetector = exits[0];
    let clearance: RouteDistances["clearance"] = null;
    if (clearanceDetector) {
      const before = records.points
        .filter((p) => p.line === clearanceDetector.line && (direction === "up" ? p.at <= clearanceDetector.at : p.at >= clearanceDetector.at))
        .sort((a, b) => Math.abs(clearanceDetector.at - a.at) - Math.abs(clearanceDetector.at - b.at));
      const last = exits.length > 1 ? exits[exits.length - 1] : undefined;
      clearance = { detector: clearanceDetector, points: before[0], nextStopAt: last && last.line === clearanceDetector.line ? last.at : undefined };
    }
    return { route: route.id, signal, approach, approachM: sameLine ? Math.abs(signal.at - approach.at) : null, direction, clearance };
  });
}
