/**
 * The alarm watchers' thresholds, one object per layout, changeable while the layout runs
 * (`AlarmWatchers.setSettings`). The defaults are the figures the watchers have always used.
 */
import { z } from "zod";

export interface WatcherSettings {
  /** A latch set, or a counter above 0, this long with no pulse on its route is "stuck". */
  stuckAfterMs: number;
  /** Two pulses on one detector closer than this are chatter (no wheelset follows that closely). */
  chatterMinGapMs: number;
  /** A chatter alarm clears after this long without chatter on its detector. */
  chatterQuietMs: number;
  /** A gap over this between pulses on one detector ends a train (for axle counting). */
  trainGapMs: number;
  /** A detector is silent when its neighbour saw this many trains that must have crossed it. */
  silentAfterTrains: number;
  /** Axle counts of one train at two detectors may differ by this many before it is an alarm. */
  axleMismatchTolerance: number;
  /** A node that said it is offline raises its alarm once it has stayed offline this long. */
  nodeOfflineAfterMs: number;
}

export const DEFAULT_WATCHER_SETTINGS: Readonly<WatcherSettings> = Object.freeze({
  stuckAfterMs: 10 * 60_000,
  chatterMinGapMs: 40,
  chatterQuietMs: 60_000,
  trainGapMs: 4_000,
  silentAfterTrains: 2,
  axleMismatchTolerance: 0,
  nodeOfflineAfterMs: 0,
});

const DAY_MS = 24 * 3_600_000;
const ms = (max: number) => z.number().int().min(0).max(max);

/** For settings that come from people (per-layout alarm settings): bounded, every field optional. */
export const watcherSettingsSchema = z.strictObject({
  stuckAfterMs: ms(DAY_MS).min(1_000).optional(),
  chatterMinGapMs: ms(10_000).optional(),
  chatterQuietMs: ms(DAY_MS).optional(),
  trainGapMs: ms(600_000).min(1).optional(),
  silentAfterTrains: z.number().int().min(1).max(1_000).optional(),
  axleMismatchTolerance: z.number().int().min(0).max(1_000).optional(),
  nodeOfflineAfterMs: ms(DAY_MS).optional(),
});

export function withDefaults(partial: Partial<WatcherSettings> = {}): WatcherSettings {
  return { ...DEFAULT_WATCHER_SETTINGS, ...partial };
}
