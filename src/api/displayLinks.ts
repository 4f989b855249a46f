import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { api } from "./client";

export const displayLinkKeys = {
  list: (slug: string) => ["display-links", slug] as const,
};

export function useDisplayLinks(slug: string) {
  return useQuery({
    queryKey: displayLinkKeys.list(slug),
    queryFn: ({ signal }) => api("GET /api/layouts/:slug/display-links", { slug, signal }),
    select: (body) => body.links,
  });
}

export function useCreateDisplayLink(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (label: string) => api("POST /api/layouts/:slug/display-links", { slug, body: label ? { label } : {} }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: displayLinkKeys.list(slug) }),
  });
}

/** Revokes by the link's id (the token itself is only known when it is made). */
export function useRevokeDisplayLink(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (idOrToken: string) => api("DELETE /api/layouts/:slug/display-links/:token", { slug, token: idOrToken }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: displayLinkKeys.list(slug) }),
  });
}
