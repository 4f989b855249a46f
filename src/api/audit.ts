import { useQuery } from "@tanstack/react-query";
import type { AuditResponse } from "../../shared/contract/controlRoom";
import { http } from "./http";

export const auditKeys = {
  list: (slug: string) => ["audit", slug] as const,
};

export function useAudit(slug: string) {
  return useQuery({
    queryKey: auditKeys.list(slug),
    queryFn: ({ signal }) => http.get<AuditResponse>(`/api/layouts/${encodeURIComponent(slug)}/audit`, signal),
    select: (body) => body.entries,
    enabled: Boolean(slug),
  });
}
