/**
 * Alarm settings per layout, stored with the layout (table `alarm_settings`, migration 010):
 * only the changed fields are kept, the rest take the defaults. A change is announced on the
 * bus (`alarm-settings.changed`), which server/index.ts forwards to the running watchers, so
 * it takes effect at once.
 */
import { ALARM_SETTING_FIELDS, type AlarmSettingKey, type AlarmSettings, type AlarmSettingsPatch, type AlarmSettingsResponse } from "@shared/contract/alarmSettings";
import type { AppDeps } from "../../deps";
import { DEFAULT_WATCHER_SETTINGS, type WatcherSettings } from "./watcherSettings";

/** How long a board may take to connect after a session opens before the roll call raises an alarm. */
export const DEFAULT_BOARD_CONNECT_WITHIN_MS = 2 * 60_000;

export const DEFAULT_ALARM_SETTINGS: Readonly<AlarmSettings> = Object.freeze({
  ...DEFAULT_WATCHER_SETTINGS,
  boardConnectWithinMs: DEFAULT_BOARD_CONNECT_WITHIN_MS,
} satisfies AlarmSettings & WatcherSettings);

const KEYS = ALARM_SETTING_FIELDS.map((f) => f.key) as AlarmSettingKey[];

/** Only known keys with numbers survive (a row written by a newer version may hold more). */
function cleanStored(stored: Record<string, unknown> | null | undefined): Partial<AlarmSettings> {
  const out: Partial<AlarmSettings> = {};
  for (const key of KEYS) if (typeof stored?.[key] === "number") out[key] = stored[key] as number;
  return out;
}

export async function storedAlarmSettings(deps: AppDeps, layoutId: number): Promise<Partial<AlarmSettings>> {
  const row = await deps.db.models.AlarmSettingsRecord.findByPk(layoutId);
  return cleanStored(row?.settings);
}

export async function alarmSettingsOf(deps: AppDeps, layoutId: number): Promise<AlarmSettings> {
  return { ...DEFAULT_ALARM_SETTINGS, ...(await storedAlarmSettings(deps, layoutId)) };
}

/** Stored changes of every layout, by slug (for the watchers at start). */
export async function allStoredAlarmSettings(deps: AppDeps): Promise<Record<string, Partial<AlarmSettings>>> {
  const rows = await deps.db.models.AlarmSettingsRecord.findAll();
  const layouts = await deps.db.models.Layout.findAll({ attributes: ["id", "slug"] });
  const slugOf = new Map(layouts.map((l) => [l.id, l.slug]));
  return Object.fromEntries(rows.filter((r) => slugOf.has(r.layoutId)).map((r) => [slugOf.get(r.layoutId)!, cleanStored(r.settings)]));
}

export async function describeAlarmSettings(deps: AppDeps, layoutId: number): Promise<AlarmSettingsResponse> {
  const row = await deps.db.models.AlarmSettingsRecord.findByPk(layoutId);
  const stored = cleanStored(row?.settings);
  const by = row?.updatedBy ? await deps.db.models.User.findByPk(row.updatedBy, { attributes: ["name"] }) : null;
  return {
    settings: { ...DEFAULT_ALARM_SETTINGS, ...stored },
    defaults: { ...DEFAULT_ALARM_SETTINGS },
    changed: KEYS.filter((k) => k in stored),
    updatedAt: row ? row.updatedAt.toISOString() : null,
    updatedBy: by?.name ?? null,
  };
}

export async function updateAlarmSettings(
  deps: AppDeps,
  layout: { id: number; slug: string },
  patch: AlarmSettingsPatch,
  user: { id: number },
): Promise<AlarmSettingsResponse> {
  const before = await storedAlarmSettings(deps, layout.id);
  const next: Partial<AlarmSettings> = { ...before };
  for (const key of KEYS) {
    const value = patch[key];
    if (value === null || value === DEFAULT_ALARM_SETTINGS[key]) delete next[key];
    else if (value !== undefined) next[key] = value;
  }
  await deps.db.sequelize.transaction(async (transaction) => {
    await deps.db.models.AlarmSettingsRecord.upsert({ layoutId: layout.id, settings: next, updatedBy: user.id, updatedAt: new Date() }, { transaction });
    await deps.db.models.AuditEntry.create(
      { layoutId: layout.id, userId: user.id, action: "alarm-settings", target: layout.slug, reason: null, before, after: next },
      { transaction },
    );
  });
  const settings = { ...DEFAULT_ALARM_SETTINGS, ...next };
  deps.bus.emit("alarm-settings.changed", { layoutId: layout.id, slug: layout.slug, settings });
  return describeAlarmSettings(deps, layout.id);
}
