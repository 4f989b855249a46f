import { useQuery } from "@tanstack/react-query";
import { api } from "./client";

export const auditKeys = {
  list: (slug: string) => ["audit", slug] as const,
};

export function useAudit(slug: string) {
  return useQuery({
    queryKey: auditKeys.list(slug),
    queryFn: ({ signal }) => api("GET /api/layouts/:slug/audit", { slug, signal }),
    select: (body) => body.entries,
    enabled: Boolean(slug),
  });
}
