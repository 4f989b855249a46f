import { keepPreviousData, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { SessionEventFilter, SessionEventPage, SessionImportResponse, SessionInputsResponse, SessionListResponse } from "../../shared/contract/sessions";
import { http } from "./http";

export const sessionKeys = {
  all: ["sessions"] as const,
  list: (slug: string) => [...sessionKeys.all, "list", slug] as const,
  events: (id: number, filter: SessionEventFilter, after: string, limit: number) => [...sessionKeys.all, id, "events", filter, after, limit] as const,
  inputs: (id: number) => [...sessionKeys.all, id, "inputs"] as const,
};

export function useSessions(slug: string | undefined) {
  return useQuery({
    queryKey: sessionKeys.list(slug ?? ""),
    queryFn: ({ signal }) => http.get<SessionListResponse>(`/api/layouts/${encodeURIComponent(slug ?? "")}/sessions`, signal),
    select: (body) => body.sessions,
    enabled: Boolean(slug),
  });
}

/** One page of a session's event log under the filters; the previous page stays shown while the next loads. */
export function useSessionEvents(id: number | undefined, filter: SessionEventFilter, after: string, limit: number) {
  return useQuery({
    queryKey: sessionKeys.events(id ?? 0, filter, after, limit),
    queryFn: ({ signal }) => {
      const query = new URLSearchParams({ format: "json", after, limit: String(limit) });
      for (const [key, value] of Object.entries(filter)) if (value) query.set(key, value);
      return http.get<SessionEventPage>(`/api/sessions/${id}/events?${query}`, signal);
    },
    enabled: typeof id === "number" && id > 0,
    placeholderData: keepPreviousData,
  });
}

/** The session's recorded engine inputs and start state; a closed session's never change. */
export function useSessionInputs(id: number | undefined) {
  return useQuery({
    queryKey: sessionKeys.inputs(id ?? 0),
    queryFn: ({ signal }) => http.get<SessionInputsResponse>(`/api/sessions/${id}/inputs`, signal),
    enabled: typeof id === "number" && id > 0,
    staleTime: 60_000,
  });
}

/** The full log as a download (the browser sends the session cookie). */
export function sessionExportUrl(id: number, format: "jsonl" | "csv"): string {
  return `/api/sessions/${id}/events?format=${format}`;
}

/** Uploads an exported log (JSONL or CSV) as a new imported session; the session list refetches. */
export function useImportSessionMutation(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ file, rulebookVersion }: { file: File; rulebookVersion?: number }) => {
      const form = new FormData();
      form.append("file", file, file.name);
      if (rulebookVersion !== undefined) form.append("rulebookVersion", String(rulebookVersion));
      return http.post<SessionImportResponse>(`/api/layouts/${encodeURIComponent(slug)}/sessions/import`, form);
    },
    onSuccess: () => queryClient.invalidateQueries({ queryKey: sessionKeys.list(slug) }),
  });
}
