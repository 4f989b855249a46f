/**
 * Every kind of alarm the control room shows (`AlarmDto.kind`, the `alarms.kind` column), as
 * one table: code that raises, clears or matches an alarm names it here (`ALARM_KIND.stuck`)
 * rather than writing the string again. The engine's own codes come from its table.
 */
import { ENGINE_ALARM } from "../rulebook/engineAlarms";

export const ALARM_KIND = {
  stuck: "stuck",
  nodeOffline: "node-offline",
  detectorSilent: "detector-silent",
  chatter: "chatter",
  axleMismatch: "axle-mismatch",
  missedPulses: "missed-pulses",
  lampProving: "lamp-proving",
  pointsDetection: "points-detection",
  ruleLoop: ENGINE_ALARM.ruleLoop,
  countUnderflow: ENGINE_ALARM.countUnderflow,
  /** A rule's own alarm action, a refuted live rulebook, or the pipeline failing (subject says which). */
  rulebook: "rulebook",
} as const;

export type AlarmKind = (typeof ALARM_KIND)[keyof typeof ALARM_KIND];
