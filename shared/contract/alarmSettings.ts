/**
 * Alarm settings per layout (`GET`/`PUT /api/layouts/:slug/alarm-settings`): the alarm
 * watchers' thresholds and the board roll call's wait, with the words and units the settings
 * form shows. Every field is bounded; a PUT names only what it changes (`null` = back to the default).
 */
import { z } from "zod";

const DAY_MS = 24 * 3_600_000;

export const ALARM_SETTING_FIELDS = [
  { key: "stuckAfterMs", label: "Latch or counter stuck after", unit: "ms", min: 1_000, max: DAY_MS, help: "set (or above 0) this long with no pulse on its route" },
  { key: "chatterMinGapMs", label: "Chatter when pulses closer than", unit: "ms", min: 0, max: 10_000, help: "no wheelset follows another that closely" },
  { key: "chatterQuietMs", label: "Chatter alarm clears after", unit: "ms", min: 0, max: DAY_MS, help: "this long without chatter on the detector" },
  { key: "trainGapMs", label: "Gap that ends a train", unit: "ms", min: 1, max: 600_000, help: "between pulses on one detector, for axle counting" },
  { key: "silentAfterTrains", label: "Detector silent after", unit: "trains", min: 1, max: 1_000, help: "its neighbour saw this many trains that must have crossed it" },
  { key: "axleMismatchTolerance", label: "Axle-count mismatch tolerance", unit: "axles", min: 0, max: 1_000, help: "counts of one train may differ by this many" },
  { key: "nodeOfflineAfterMs", label: "Board offline alarm after", unit: "ms", min: 0, max: DAY_MS, help: "a board that went offline stays so this long" },
  { key: "boardConnectWithinMs", label: "Board must connect within", unit: "ms", min: 1_000, max: DAY_MS, help: "of the session's start, or it raises an alarm" },
] as const;

export type AlarmSettingKey = (typeof ALARM_SETTING_FIELDS)[number]["key"];
export type AlarmSettings = Record<AlarmSettingKey, number>;

/** A PUT body: the fields to change; null puts one back to its default. */
export const alarmSettingsPatchSchema = z.strictObject(
  Object.fromEntries(
    ALARM_SETTING_FIELDS.map((f) => [f.key, z.number().int(`whole ${f.unit}`).min(f.min).max(f.max).nullable().optional()]),
  ) as Record<AlarmSettingKey, z.ZodOptional<z.ZodNullable<z.ZodNumber>>>,
);
export type AlarmSettingsPatch = z.infer<typeof alarmSettingsPatchSchema>;

export interface AlarmSettingsResponse {
  /** What the watchers use now. */
  settings: AlarmSettings;
  defaults: AlarmSettings;
  /** The fields this layout changed from the defaults. */
  changed: AlarmSettingKey[];
  updatedAt: string | null;
  updatedBy: string | null;
}
