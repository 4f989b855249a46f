/**
 * Detector-placement arithmetic: scale speed, and how far before a signal its approach
 * detector must sit so the aspect can change before a driver must start to slow, and
 * whether a clearance detector sits far enough beyond the fouling point.
 *
 * Units are explicit in every name: model metres (`…M`), seconds (`…S`), milliseconds
 * (`…Ms`), model metres per second (`…Mps`), prototype kilometres per hour (`…Kmh`).
 * Prototype speed relates to model speed by the scale ratio: a model moving at v m/s
 * represents a prototype moving at v × ratio m/s (the linear method the hobby uses).
 *
 * @example
 * // G scale, a goods train at a scale 25 km/h, 1 s reaction, 150 ms controller latency:
 * approachDistance({ ratio: 22.5, speed: { prototypeKmh: 25 }, reactionS: 1, controllerLatencyMs: 150, decelerationMps2: 0.15 })
 */

export const METRES_PER_MILE = 1609.344;
export const SECONDS_PER_HOUR = 3600;

/** Model metres per second → prototype km/h at the given scale ratio (1:ratio). */
export function prototypeKmh(modelMps: number, ratio: number): number {
  return (modelMps * ratio * SECONDS_PER_HOUR) / 1000;
}

/** Model metres per second → prototype miles per hour at the given scale ratio. */
export function prototypeMph(modelMps: number, ratio: number): number {
  return (modelMps * ratio * SECONDS_PER_HOUR) / METRES_PER_MILE;
}

/** Prototype km/h → model metres per second at the given scale ratio. */
export function modelMpsFromKmh(prototypeKmh: number, ratio: number): number {
  return (prototypeKmh * 1000) / SECONDS_PER_HOUR / ratio;
}

/** Measured on the layout: `distanceM` of model track covered in `seconds`. */
export function scaleSpeedFromTiming(distanceM: number, seconds: number, ratio: number): { modelMps: number; prototypeKmh: number; prototypeMph: number } {
  if (!(seconds > 0)) throw new RangeError("the timing must be longer than 0 s");
  if (!(distanceM >= 0)) throw new RangeError("the distance must not be negative");
  const modelMps = distanceM / seconds;
  return { modelMps, prototypeKmh: prototypeKmh(modelMps, ratio), prototypeMph: prototypeMph(modelMps, ratio) };
}

export type SpeedInput = { prototypeKmh: number } | { prototypeMph: number } | { modelMps: number } | { distanceM: number; seconds: number };

/** Prototype miles per hour → model metres per second at the given scale ratio. */
export function modelMpsFromMph(prototypeMph: number, ratio: number): number {
  return (prototypeMph * METRES_PER_MILE) / SECONDS_PER_HOUR / ratio;
}

export interface ApproachInput {
  /** Scale ratio, e.g. 22.5 for 1:22.5. */
  ratio: number;
  speed: SpeedInput;
  /** Driver (operator) reaction time from the aspect changing to starting to act. */
  reactionS: number;
  /** Pulse → broker → server → aspect command → board → lamp. */
  controllerLatencyMs: number;
  /** Model deceleration once braking; from a measured stopping distance: v² / (2 × d). */
  decelerationMps2: number;
  /** Extra distance kept in hand, e.g. for a train that drifts. */
  marginM?: number;
}

export interface ApproachResult {
  modelMps: number;
  prototypeKmh: number;
  /** Travelled while the system reacts: v × latency. */
  latencyM: number;
  /** Travelled while the driver reacts: v × reaction time. */
  reactionM: number;
  /** Travelled while braking to a stand: v² / (2a). */
  brakingM: number;
  marginM: number;
  /** The shortest safe distance from the approach detector to the signal. */
  totalM: number;
}

function modelSpeed(speed: SpeedInput, ratio: number): number {
  if ("prototypeKmh" in speed) return modelMpsFromKmh(speed.prototypeKmh, ratio);
  if ("prototypeMph" in speed) return modelMpsFromMph(speed.prototypeMph, ratio);
  if ("modelMps" in speed) return speed.modelMps;
  return scaleSpeedFromTiming(speed.distanceM, speed.seconds, ratio).modelMps;
}

/**
 * The shortest distance from approach detector to signal: whatever the train covers while
 * the controller turns the pulse into an aspect, while the driver reacts, and while it
 * brakes to a stand, plus any margin (textbook kinematics: reaction distance v·t,
 * braking distance v²/(2a)).
 */
export function approachDistance(input: ApproachInput): ApproachResult {
  if (!(input.ratio > 0)) throw new RangeError("the scale ratio must be more than 0");
  if (!(input.decelerationMps2 > 0)) throw new RangeError("the deceleration must be more than 0");
  if (input.reactionS < 0 || input.controllerLatencyMs < 0) throw new RangeError("times must not be negative");
  const v = modelSpeed(input.speed, input.ratio);
  const latencyM = v * (input.controllerLatencyMs / 1000);
  const reactionM = v * input.reactionS;
  const brakingM = (v * v) / (2 * input.decelerationMps2);
  const marginM = input.marginM ?? 0;
  return {
    modelMps: v,
    prototypeKmh: prototypeKmh(v, input.ratio),
    latencyM,
    reactionM,
    brakingM,
    marginM,
    totalM: latencyM + reactionM + brakingM + marginM,
  };
}

/** Deceleration from a measured stop: a train at `modelMps` that stops in `stoppingM`. */
export function decelerationFromStop(modelMps: number, stoppingM: number): number {
  if (!(stoppingM > 0)) throw new RangeError("the stopping distance must be more than 0");
  return (modelMps * modelMps) / (2 * stoppingM);
}

export interface ClearanceInput {
  /** Position (m along the line) of the fouling point the train must clear. */
  foulingPointAt: number;
  /** Position of the clearance (exit) detector. */
  clearanceDetectorAt: number;
  /** Length of the last vehicle beyond its last axle: the part still foul after the last pulse. */
  rearOverhangM: number;
  /** Longest train the society runs over this junction. */
  longestTrainM: number;
  /** Where such a train next stops beyond the junction (a signal or the end of a loop), if any. */
  nextStopAt?: number;
  /** Direction of travel along the line's metres. */
  direction?: "up" | "down";
}

/** Positions are measured, so differences below a micrometre are rounding, not distance. */
export const POSITION_TOLERANCE_M = 1e-6;

export interface ClearanceFinding {
  ok: boolean;
  message: string;
}

/**
 * Checks a clearance detector: the last axle crossing it must leave the whole train clear of
 * the fouling point (detector beyond fouling point by at least the rear overhang), and the
 * longest train must fit between the fouling point and its next stop, or it would stand foul.
 */
export function checkClearance(input: ClearanceInput): { findings: ClearanceFinding[]; beyondFoulingM: number; roomBeyondM: number | null } {
  const sign = input.direction === "down" ? -1 : 1;
  const beyondFoulingM = sign * (input.clearanceDetectorAt - input.foulingPointAt);
  const findings: ClearanceFinding[] = [];
  if (beyondFoulingM + POSITION_TOLERANCE_M < input.rearOverhangM) {
    findings.push({
      ok: false,
      message: `the clearance detector is ${beyondFoulingM.toFixed(2)} m beyond the fouling point but the rear overhang is ${input.rearOverhangM.toFixed(2)} m: a train would be counted clear while still foul`,
    });
  } else {
    findings.push({ ok: true, message: `a train is clear of the fouling point when its last axle crosses the clearance detector (${(beyondFoulingM - input.rearOverhangM).toFixed(2)} m to spare)` });
  }
  let roomBeyondM: number | null = null;
  if (input.nextStopAt !== undefined) {
    roomBeyondM = sign * (input.nextStopAt - input.foulingPointAt);
    findings.push(
      roomBeyondM + POSITION_TOLERANCE_M >= input.longestTrainM
        ? { ok: true, message: `the longest train (${input.longestTrainM.toFixed(2)} m) fits beyond the fouling point (${roomBeyondM.toFixed(2)} m of room)` }
        : { ok: false, message: `the longest train (${input.longestTrainM.toFixed(2)} m) does not fit beyond the fouling point (${roomBeyondM.toFixed(2)} m of room): it would stand foul of the junction` },
    );
  }
  return { findings, beyondFoulingM, roomBeyondM };
}
