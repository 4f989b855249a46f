/**
 * The alarm codes the rulebook engine raises itself: the `to` of an `alarm` change
 * (engine.ts, "Alarm changes"). One table, so a code is written once and matched by name.
 */
export const ENGINE_ALARM = {
  /** A rule's `{ alarm: TEXT }` action ran. */
  ruleAlarm: "rule-alarm",
  /** A counter would have gone below 0 and was held at 0. */
  countUnderflow: "count-underflow",
  /** A settle ran more standing rules than allowed: the rulebook is faulted. */
  ruleLoop: "rule-loop",
} as const;

export type EngineAlarmCode = (typeof ENGINE_ALARM)[keyof typeof ENGINE_ALARM];
