import { useState } from "react";
import { ALARM_SETTING_FIELDS, type AlarmSettingKey, type AlarmSettingsPatch } from "@shared/contract/alarmSettings";
import { ApiError } from "../../api/http";
import { useAlarmSettings, useAlarmSettingsMutation } from "../../api/alarms";
import { useCurrentUser } from "../../hooks/useCurrentUser";
import { formatDuration } from "../../lib/duration";
import { formatDateTimeSeconds } from "../../lib/format";
import { Button } from "../ui/Button";
import { Panel } from "../ui/Panel";
import { LoadError, Loading } from "../ui/Status";

/** Times are edited in seconds (whole ms would be a long number to type); counts as they are. */
const toInput = (unit: string, value: number) => String(unit === "ms" ? value / 1000 : value);
const fromInput = (unit: string, text: string) => (unit === "ms" ? Math.round(Number(text) * 1000) : Number(text));
const shownValue = (unit: string, value: number) => (unit === "ms" ? (value < 1000 ? `${value} ms` : formatDuration(value)) : `${value} ${unit}`);

/** The layout's alarm settings: everyone reads them, engineers change them (used by the watchers at once). */
export function AlarmSettingsPanel({ slug }: { slug: string }) {
  const user = useCurrentUser();
  const settings = useAlarmSettings(slug);
  const save = useAlarmSettingsMutation(slug);
  const [edits, setEdits] = useState<Partial<Record<AlarmSettingKey, string>>>({});
  const canEdit = user.role === "engineer" || user.role === "admin";
  if (settings.isPending) return <Loading what="alarm settings" />;
  if (settings.isError) return <LoadError error={settings.error} what="alarm settings" />;
  const data = settings.data;
  const fieldError = (key: string) => (save.error instanceof ApiError ? save.error.fieldErrors.find((e) => e.path === `$.${key}`)?.message : undefined);
  const submit = () => {
    const patch: AlarmSettingsPatch = {};
    for (const f of ALARM_SETTING_FIELDS) {
      const text = edits[f.key];
      if (text === undefined) continue;
      patch[f.key] = text.trim() === "" ? null : fromInput(f.unit, text);
    }
    save.mutate(patch, { onSuccess: () => setEdits({}) });
  };
  return (
    <Panel title="Alarm settings">
      <p className="mb-2 text-sm text-ink-soft">
        Limits the alarm watchers use on this layout; a change applies at once. Times in seconds; leave a field empty for the default.
        {data.updatedAt ? ` Last changed ${formatDateTimeSeconds(data.updatedAt)}${data.updatedBy ? ` by ${data.updatedBy}` : ""}.` : ""}
      </p>
      <form
        onSubmit={(e) => {
          e.preventDefault();
          submit();
        }}
      >
        <table className="w-full text-sm" aria-label="Alarm settings">
          <tbody>
            {ALARM_SETTING_FIELDS.map((f) => {
              const id = `alarm-setting-${f.key}`;
              const changed = data.changed.includes(f.key);
              const error = fieldError(f.key);
              return (
                <tr key={f.key} className="border-t border-panel-700" data-setting={f.key}>
                  <th scope="row" className="py-1.5 pr-3 text-left font-semibold">
                    <label htmlFor={id}>{f.label}</label>
                    <span className="block text-xs font-normal text-ink-faint">{f.help}</span>
                  </th>
                  <td className="whitespace-nowrap py-1.5 pr-3">
                    {canEdit ? (
                      <input
                        id={id}
                        inputMode="decimal"
                        aria-invalid={error ? true : undefined}
                        value={edits[f.key] ?? (changed ? toInput(f.unit, data.settings[f.key]) : "")}
                        placeholder={toInput(f.unit, data.defaults[f.key])}
                        onChange={(e) => setEdits((old) => ({ ...old, [f.key]: e.target.value }))}
                        className="w-28 rounded border border-panel-600 bg-panel-950 px-2 py-1"
                      />
                    ) : (
                      <span id={id}>{shownValue(f.unit, data.settings[f.key])}</span>
                    )}{" "}
                    <span className="text-xs text-ink-faint">{f.unit === "ms" ? "s" : f.unit}</span>
                    {error ? <span className="block text-xs text-notice-error">{error}</span> : null}
                  </td>
                  <td className="whitespace-nowrap py-1.5 text-xs text-ink-faint">{changed ? `default ${shownValue(f.unit, data.defaults[f.key])}` : "default"}</td>
                </tr>
              );
            })}
          </tbody>
        </table>
        {canEdit ? (
          <div className="mt-3 flex items-center gap-3">
            <Button type="submit" disabled={save.isPending || Object.keys(edits).length === 0}>
              Save alarm settings
            </Button>
            {save.isSuccess ? <span role="status" className="text-sm text-notice-ok">Saved; the watchers use them now.</span> : null}
            {save.error && !(save.error instanceof ApiError && save.error.fieldErrors.length) ? (
              <span role="alert" className="text-sm text-notice-error">
                {save.error instanceof ApiError ? save.error.message : String(save.error)}
              </span>
            ) : null}
          </div>
        ) : null}
      </form>
    </Panel>
  );
}
