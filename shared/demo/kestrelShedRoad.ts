/**
 * Kestrel Bank's loco-shed road, placed by the placement arithmetic (`shared/layout/placement.ts`)
 * from the figures the (invented) Fernmoor society measured on it, not by round numbers.
 *
 * The shed road runs from the bank-engine shed at the foot of Kestrel Bank up to the main line,
 * which it joins at the shed points (P3) between the main home signal and the bank points: below
 * the junction. Its metres run from the shed doors (0 m) towards the main line.
 *
 * - Signal S1 (and its entry detector SE, level with it) stands before the fouling point by the
 *   engine's braking distance at the shed-road speed plus its front overhang: an engine whose
 *   driver only brakes on passing S1 at danger still stops clear of the main line (an overlap).
 * - The approach detector SA stands before S1 by the full approach distance: controller latency,
 *   driver reaction, braking and a margin (`approachDistance`).
 * Positions are rounded to the centimetre, always away from danger (the signal towards the shed,
 * the approach detector further back), as one would mark them on the track.
 */
import { approachDistance, decelerationFromStop, modelMpsFromKmh, type ApproachInput, type ApproachResult } from "../layout/placement";

const G_RATIO = 22.5;

/** The shed road's speed limit for light engines, scale km/h. */
export const SHED_ROAD_KMH = 20;
/** Measured: a light engine at the shed-road speed stops in this distance, model metres. */
export const SHED_ENGINE_STOP_M = 0.5;
/** Where the shed road comes within the main line's clearance, metres along the shed road. */
export const SHED_FOULING_POINT_AT_M = 9.6;
/** Where the shed road meets the main line: the shed points, metres along the main line. */
export const SHED_POINTS_MAIN_AT_M = 15.2;
/** Buffer beam ahead of the leading axle of the longest bank engine, metres. */
export const SHED_ENGINE_FRONT_OVERHANG_M = 0.12;

const shedSpeedMps = modelMpsFromKmh(SHED_ROAD_KMH, G_RATIO);

/** The approach figures for the shed road (G scale, Fernmoor's controller and drivers). */
export const SHED_ROAD_APPROACH: ApproachInput = {
  ratio: G_RATIO,
  speed: { prototypeKmh: SHED_ROAD_KMH },
  reactionS: 1,
  controllerLatencyMs: 150,
  decelerationMps2: decelerationFromStop(shedSpeedMps, SHED_ENGINE_STOP_M),
  // Greasy rail in the shed yard: an engine may slide a little further than it stops on clean rail.
  marginM: 0.5,
};

const CM = 100;
/** Down to the centimetre; a hair's floating-point noise below a whole centimetre is not a centimetre less. */
const downToCm = (m: number) => Math.floor(m * CM + 1e-6) / CM;

export interface ShedRoadPlacement {
  approach: ApproachResult;
  /** S1 and SE, metres along the shed road. */
  signalAt: number;
  /** SA, metres along the shed road. */
  approachDetectorAt: number;
}

export function shedRoadPlacement(): ShedRoadPlacement {
  const approach = approachDistance(SHED_ROAD_APPROACH);
  const signalAt = downToCm(SHED_FOULING_POINT_AT_M - approach.brakingM - SHED_ENGINE_FRONT_OVERHANG_M);
  const approachDetectorAt = downToCm(signalAt - approach.totalM);
  return { approach, signalAt, approachDetectorAt };
}
