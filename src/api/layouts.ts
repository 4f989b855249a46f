import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { CreateNodeBody } from "@shared/contract/rest";
import type { CreateLayoutBody } from "@shared/contract/layoutEdit";
import type { EditableLayout } from "../lib/layoutDraft";
import { api, apiUrl } from "./client";

export const layoutKeys = {
  all: ["layouts"] as const,
  list: () => [...layoutKeys.all, "list"] as const,
  detail: (slug: string) => [...layoutKeys.all, "detail", slug] as const,
};

export function useLayouts() {
  return useQuery({
    queryKey: layoutKeys.list(),
    queryFn: ({ signal }) => api("GET /api/layouts", { signal }),
    select: (body) => body.layouts,
  });
}

export function useLayout(slug: string | undefined) {
  return useQuery({
    queryKey: layoutKeys.detail(slug ?? ""),
    queryFn: ({ signal }) => api("GET /api/layouts/:slug", { slug: slug ?? "", signal }),
    select: (body) => body.layout,
    enabled: Boolean(slug),
  });
}

/** Sends a layout file (already parsed from JSON; the server validates it). */
export function useImportLayoutMutation() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (layoutFile: unknown) => api("POST /api/layouts/import", { body: layoutFile }),
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
    mutationFn: (node: CreateNodeBody) => api("POST /api/layouts/:slug/nodes", { slug, body: node }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: layoutKeys.detail(slug) }),
  });
}

/** `POST /api/layouts`: a new, empty layout (no rulebook until one is published). */
export function useCreateLayoutMutation() {
  const queryClient = useQueryClient();
  return useMutation({
    // 201 with the new layout (CONTRACT.md §6; shared/contract/layoutEdit.ts).
    mutationFn: (input: CreateLayoutBody) => api("POST /api/layouts", { body: input }).then((body) => body.layout),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: layoutKeys.all }),
  });
}

/** The layout with its `revision`, for editing (the same reply as `useLayout`, unselected). */
export function useEditableLayout(slug: string) {
  return useQuery({
    queryKey: layoutKeys.detail(slug),
    queryFn: ({ signal }) => api("GET /api/layouts/:slug", { slug, signal }),
    select: (body): EditableLayout => body.layout,
    enabled: Boolean(slug),
    // An open editor must not swap the layout under the engineer: reloads are asked for.
    refetchOnWindowFocus: false,
  });
}

/**
 * `PUT /api/layouts/:slug` with the revision the edit started from. A 409 means someone
 * saved first; a 400 lists every problem with its path (including the live rulebook's).
 */
export function useSaveLayoutMutation(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: { file: Record<string, unknown>; revision: number | undefined }) =>
      api("PUT /api/layouts/:slug", { slug, body: { ...input.file, revision: input.revision } }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: layoutKeys.all }),
  });
}

/** Archive (stops running live, read-only) or restore; admin only. */
export function useArchiveMutation(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (action: "archive" | "restore") => api(action === "archive" ? "POST /api/layouts/:slug/archive" : "POST /api/layouts/:slug/restore", { slug }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: layoutKeys.all }),
  });
}

/** The export is a plain download: the browser fetches it with the session cookie. */
export function layoutExportUrl(slug: string): string {
  return apiUrl("GET /api/layouts/:slug/export", { slug });
}
