import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { AlarmsResponse, AlarmStateFilter } from "../../shared/contract/controlRoom";
import type { AlarmSettingsPatch, AlarmSettingsResponse } from "../../shared/contract/alarmSettings";
import type { AlarmDto } from "../../shared/contract/live";
import { http } from "./http";

export const alarmKeys = {
  all: ["alarms"] as const,
  list: (slug: string, state: AlarmStateFilter) => ["alarms", slug, state] as const,
};

export function useAlarms(slug: string, state: AlarmStateFilter) {
  return useQuery({
    queryKey: alarmKeys.list(slug, state),
    queryFn: ({ signal }) => http.get<AlarmsResponse>(`/api/layouts/${encodeURIComponent(slug)}/alarms?state=${state}`, signal),
    select: (body) => body.alarms,
    enabled: Boolean(slug),
  });
}

export function useAcknowledgeAlarm() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ id, comment }: { id: number; comment: string }) => http.post<{ alarm?: AlarmDto }>(`/api/alarms/${id}/acknowledge`, { comment }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: alarmKeys.all }),
  });
}

export const alarmSettingsKey = (slug: string) => ["alarm-settings", slug] as const;

/** The layout's alarm settings as the watchers use them, with the defaults. */
export function useAlarmSettings(slug: string) {
  return useQuery({
    queryKey: alarmSettingsKey(slug),
    queryFn: ({ signal }) => http.get<AlarmSettingsResponse>(`/api/layouts/${encodeURIComponent(slug)}/alarm-settings`, signal),
    enabled: Boolean(slug),
  });
}

/** Changes some alarm settings (engineer, admin); null puts one back to its default. */
export function useAlarmSettingsMutation(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (patch: AlarmSettingsPatch) => http.put<AlarmSettingsResponse>(`/api/layouts/${encodeURIComponent(slug)}/alarm-settings`, patch),
    onSuccess: (data) => queryClient.setQueryData(alarmSettingsKey(slug), data),
  });
}
