import { keepPreviousData, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { SessionEventFilter } from "@shared/contract/sessions";
import { api, apiUrl } from "./client";

export const sessionKeys = {
  all: ["sessions"] as const,
  list: (slug: string) => [...sessionKeys.all, "list", slug] as const,
  events: (id: number, filter: SessionEventFilter, after: string, limit: number) => [...sessionKeys.all, id, "events", filter, after, limit] as const,
  inputs: (id: number) => [...sessionKeys.all, id, "inputs"] as const,
};

export function useSessions(slug: string | undefined) {
  return useQuery({
    queryKey: sessionKeys.list(slug ?? ""),
    queryFn: ({ signal }) => api("GET /api/layouts/:slug/sessions", { slug: slug ?? "", signal }),
    select: (body) => body.sessions,
    enabled: Boolean(slug),
  });
}

/** One page of a session's event log under the filters; the previous page stays shown while the next loads. */
export function useSessionEvents(id: number | undefined, filter: SessionEventFilter, after: string, limit: number) {
  return useQuery({
    queryKey: sessionKeys.events(id ?? 0, filter, after, limit),
    // An empty filter field means "any": the query string leaves it out.
    queryFn: ({ signal }) => api("GET /api/sessions/:id/events", { id: id ?? 0, query: { format: "json", after, limit, ...filter }, signal }),
    enabled: typeof id === "number" && id > 0,
    placeholderData: keepPreviousData,
  });
}

/** The session's recorded engine inputs and start state; a closed session's never change. */
export function useSessionInputs(id: number | undefined) {
  return useQuery({
    queryKey: sessionKeys.inputs(id ?? 0),
    queryFn: ({ signal }) => api("GET /api/sessions/:id/inputs", { id: id ?? 0, signal }),
    enabled: typeof id === "number" && id > 0,
    staleTime: 60_000,
  });
}

/** The full log as a download (the browser sends the session cookie). */
export function sessionExportUrl(id: number, format: "jsonl" | "csv"): string {
  return apiUrl("GET /api/sessions/:id/events", { id, query: { format } });
}

/** Uploads an exported log (JSONL or CSV) as a new imported session; the session list refetches. */
export function useImportSessionMutation(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ file, rulebookVersion }: { file: File; rulebookVersion?: number }) => {
      const form = new FormData();
      form.append("file", file, file.name);
      if (rulebookVersion !== undefined) form.append("rulebookVersion", String(rulebookVersion));
      return api("POST /api/layouts/:slug/sessions/import", { slug, body: form });
    },
    onSuccess: () => queryClient.invalidateQueries({ queryKey: sessionKeys.list(slug) }),
  });
}
