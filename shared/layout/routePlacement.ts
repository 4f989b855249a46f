/**
 * Placement checked against the layout itself: for each proving route, the actual distance
 * from its approach detector to its signal (from the records' `at` positions) against the
 * shortest safe distance for a stated speed, and its clearance detector (the route's last exit)
 * against the longest train. Pure: the placement page and tests call it with what they have.
 *
 * Assumptions, said where they are made:
 * - The approach detector is the route's first one (where the rulebook starts counting, so
 *   where the signal can first react). It must be on the signal's line; the direction of
 *   travel on that line is from the detector towards the signal.
 * - The fouling point, unless given, is taken at the points on the clearance detector's line
 *   nearest behind that detector: a conservative stand-in until the engineer measures it.
 * - On the clearance detector's line a train runs the same way as on its signal's line, unless
 *   the entry detector is on that line too (then from the entry towards the exit).
 *
 * @example
 * checkRoutePlacement({ layout, routes: rulebook.proving.routes,
 *   approach: { speed: { prototypeKmh: 25 }, reactionS: 1, controllerLatencyMs: 150, decelerationMps2: 0.15 },
 *   clearance: { longestTrainM: 2.4, rearOverhangM: 0.12 } })
 */
import type { ProvingRoute } from "../rulebook/schema";
import { POSITION_TOLERANCE_M, approachDistance, checkClearance, type ApproachInput, type ApproachResult, type ClearanceFinding } from "./placement";

interface Placed {
  id: string;
  line: string;
  at: number;
}

export interface RoutePlacementInput {
  layout: { scale: { ratio: number }; detectors: readonly Placed[]; signals: readonly Placed[]; points: readonly Placed[] };
  routes: readonly Pick<ProvingRoute, "id" | "signal" | "approach" | "entry" | "exit">[];
  /** Everything of the approach calculation but the ratio, which comes from the layout's scale. */
  approach: Omit<ApproachInput, "ratio">;
  clearance?: {
    longestTrainM: number;
    rearOverhangM: number;
    /** Measured fouling points (m along the clearance detector's line), by route id. */
    foulingPointAt?: Record<string, number>;
    /** Where the longest train next stops beyond the junction, by route id. */
    nextStopAt?: Record<string, number>;
  };
}

export interface ApproachCheck {
  detector: string;
  /** Detector to signal along the line; null when it cannot be measured (see `message`). */
  actualM: number | null;
  requiredM: number;
  /** null when the distance could not be measured. */
  ok: boolean | null;
  message: string;
}

export interface ClearanceCheck {
  detector: string;
  foulingPointAt: number | null;
  /** Where the fouling point came from: `given`, `points P1`, or null when none is known. */
  foulingPointFrom: string | null;
  ok: boolean | null;
  findings: ClearanceFinding[];
}

export interface RoutePlacement {
  route: string;
  signal: string;
  approach: ApproachCheck;
  clearance: ClearanceCheck | null;
}

export interface RoutePlacementResult {
  /** The same for every route: it depends on speed, reaction, latency and braking only. */
  required: ApproachResult;
  routes: RoutePlacement[];
}

const metres = (m: number) => `${m.toFixed(2)} m`;

export function checkRoutePlacement(input: RoutePlacementInput): RoutePlacementResult {
  const required = approachDistance({ ...input.approach, ratio: input.layout.scale.ratio });
  const detectors = new Map(input.layout.detectors.map((d) => [d.id, d]));
  const signals = new Map(input.layout.signals.map((s) => [s.id, s]));
  return {
    required,
    routes: input.routes.map((route) => {
      const signal = signals.get(route.signal);
      const first = detectors.get(route.approach[0]);
      const approach = approachCheck(route.approach[0], first, signal, required.totalM);
      const direction = signal && first && first.line === signal.line ? Math.sign(signal.at - first.at) || 1 : 1;
      const clearance = input.clearance ? clearanceCheck(input, route, detectors, direction) : null;
      return { route: route.id, signal: route.signal, approach, clearance };
    }),
  };
}

function approachCheck(id: string, detector: Placed | undefined, signal: Placed | undefined, requiredM: number): ApproachCheck {
  const base = { detector: id, requiredM };
  if (!detector || !signal) return { ...base, actualM: null, ok: null, message: `no position for ${!detector ? `detector ${id}` : "the signal"} in the layout` };
  if (detector.line !== signal.line) {
    return { ...base, actualM: null, ok: null, message: `detector ${id} is on line "${detector.line}", signal ${signal.id} on "${signal.line}": measure the distance along the track yourself` };
  }
  const actualM = Math.abs(signal.at - detector.at);
  const ok = actualM + POSITION_TOLERANCE_M >= requiredM;
  return {
    ...base,
    actualM,
    ok,
    message: ok
      ? `detector ${id} is ${metres(actualM)} before signal ${signal.id}; ${metres(requiredM)} is needed (${metres(actualM - requiredM)} to spare)`
      : `detector ${id} is only ${metres(actualM)} before signal ${signal.id}; ${metres(requiredM)} is needed: move it ${metres(requiredM - actualM)} further back, or run slower`,
  };
}

function clearanceCheck(input: RoutePlacementInput, route: RoutePlacementInput["routes"][number], detectors: Map<string, Placed>, signalLineDirection: number): ClearanceCheck {
  const options = input.clearance!;
  const id = route.exit[route.exit.length - 1];
  const exit = detectors.get(id);
  if (!exit) return { detector: id, foulingPointAt: null, foulingPointFrom: null, ok: null, findings: [{ ok: false, message: `no position for detector ${id} in the layout` }] };
  const entry = detectors.get(route.entry);
  const direction = entry && entry.line === exit.line && entry.at !== exit.at ? Math.sign(exit.at - entry.at) : signalLineDirection;

  let foulingPointAt: number | null = options.foulingPointAt?.[route.id] ?? null;
  let foulingPointFrom: string | null = foulingPointAt === null ? null : "given";
  if (foulingPointAt === null) {
    const behind = input.layout.points
      .filter((p) => p.line === exit.line && direction * (exit.at - p.at) >= 0)
      .sort((a, b) => direction * (b.at - a.at));
    if (behind[0]) {
      foulingPointAt = behind[0].at;
      foulingPointFrom = `points ${behind[0].id}`;
    }
  }
  if (foulingPointAt === null) {
    return { detector: id, foulingPointAt, foulingPointFrom, ok: null, findings: [{ ok: false, message: `no fouling point known for route ${route.id}: give one (no points on line "${exit.line}" before ${id})` }] };
  }
  const { findings } = checkClearance({
    foulingPointAt,
    clearanceDetectorAt: exit.at,
    rearOverhangM: options.rearOverhangM,
    longestTrainM: options.longestTrainM,
    nextStopAt: options.nextStopAt?.[route.id],
    direction: direction < 0 ? "down" : "up",
  });
  return { detector: id, foulingPointAt, foulingPointFrom, ok: findings.every((f) => f.ok), findings };
}
