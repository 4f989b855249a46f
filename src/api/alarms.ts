import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { AlarmStateFilter } from "@shared/contract/controlRoom";
import type { AlarmSettingsPatch } from "@shared/contract/alarmSettings";
import { api } from "./client";

export const alarmKeys = {
  all: ["alarms"] as const,
  list: (slug: string, state: AlarmStateFilter) => ["alarms", slug, state] as const,
};

export function useAlarms(slug: string, state: AlarmStateFilter) {
  return useQuery({
    queryKey: alarmKeys.list(slug, state),
    queryFn: ({ signal }) => api("GET /api/layouts/:slug/alarms", { slug, query: { state }, signal }),
    select: (body) => body.alarms,
    enabled: Boolean(slug),
  });
}

export function useAcknowledgeAlarm() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ id, comment }: { id: number; comment: string }) => api("POST /api/alarms/:id/acknowledge", { id, body: { comment } }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: alarmKeys.all }),
  });
}

export const alarmSettingsKey = (slug: string) => ["alarm-settings", slug] as const;

/** The layout's alarm settings as the watchers use them, with the defaults. */
export function useAlarmSettings(slug: string) {
  return useQuery({
    queryKey: alarmSettingsKey(slug),
    queryFn: ({ signal }) => api("GET /api/layouts/:slug/alarm-settings", { slug, signal }),
    enabled: Boolean(slug),
  });
}

/** Changes some alarm settings (engineer, admin); null puts one back to its default. */
export function useAlarmSettingsMutation(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (patch: AlarmSettingsPatch) => api("PUT /api/layouts/:slug/alarm-settings", { slug, body: patch }),
    onSuccess: (data) => queryClient.setQueryData(alarmSettingsKey(slug), data),
  });
}
