import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { CreateDisplayLinkResponse, DisplayLinkDto } from "../../shared/contract/controlRoom";
import { http, request } from "./http";

export const displayLinkKeys = {
  list: (slug: string) => ["display-links", slug] as const,
};
const base = (slug: string) => `/api/layouts/${encodeURIComponent(slug)}/display-links`;

export function useDisplayLinks(slug: string) {
  return useQuery({
    queryKey: displayLinkKeys.list(slug),
    queryFn: ({ signal }) => http.get<{ links: DisplayLinkDto[] }>(base(slug), signal),
    select: (body) => body.links,
  });
}

export function useCreateDisplayLink(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (label: string) => http.post<CreateDisplayLinkResponse>(base(slug), label ? { label } : {}),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: displayLinkKeys.list(slug) }),
  });
}

/** Revokes by the link's id (the token itself is only known when it is made). */
export function useRevokeDisplayLink(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (idOrToken: string) => request<unknown>(`${base(slug)}/${encodeURIComponent(idOrToken)}`, { method: "DELETE" }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: displayLinkKeys.list(slug) }),
  });
}
