import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { CreateNodeBody, CreateNodeResponse, ImportLayoutResponse, LayoutResponse, LayoutsResponse } from "../../shared/contract/rest";
import { http } from "./http";

export const layoutKeys = {
  all: ["layouts"] as const,
  list: () => [...layoutKeys.all, "list"] as const,
  detail: (slug: string) => [...layoutKeys.all, "detail", slug] as const,
};

export function useLayouts() {
  return useQuery({
    queryKey: layoutKeys.list(),
    queryFn: ({ signal }) => http.get<LayoutsResponse>("/api/layouts", signal),
    select: (body) => body.layouts,
  });
}

export function useLayout(slug: string | undefined) {
  return useQuery({
    queryKey: layoutKeys.detail(slug ?? ""),
    queryFn: ({ signal }) => http.get<LayoutResponse>(`/api/layouts/${encodeURIComponent(slug ?? "")}`, signal),
    select: (body) => body.layout,
    enabled: Boolean(slug),
  });
}

/** Sends a layout file (already parsed from JSON; the server validates it). */
export function useImportLayoutMutation() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (layoutFile: unknown) => http.post<ImportLayoutResponse>("/api/layouts/import", layoutFile),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: layoutKeys.all }),
  });
}

/**
 * Registers a board, or issues a new secret for one already registered (same id). The
 * secret is in this reply only: the server keeps its hash.
 */
export function useRegisterNodeMutation(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (node: CreateNodeBody) => http.post<CreateNodeResponse>(`/api/layouts/${encodeURIComponent(slug)}/nodes`, node),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: layoutKeys.detail(slug) }),
  });
}

/** The export is a plain download: the browser fetches it with the session cookie. */
export function layoutExportUrl(slug: string): string {
  return `/api/layouts/${encodeURIComponent(slug)}/export`;
}

export function fetchLayoutExport(slug: string): Promise<unknown> {
  return http.get<unknown>(layoutExportUrl(slug));
}
