import { useQuery } from "@tanstack/react-query";
import type { ReportCsvTable } from "@shared/contract/restMap";
import { api, apiUrl } from "./client";
import { sessionKeys } from "./sessions";

export const REPORT_CSV_TABLES = ["routes", "trains", "checks", "detectors", "nodes", "alarms"] as const satisfies readonly ReportCsvTable[];

/** The running-day report of a session; an open session's figures grow, so it is refetched each minute. */
export function useSessionReport(id: number | undefined) {
  return useQuery({
    queryKey: [...sessionKeys.all, id ?? 0, "report"] as const,
    queryFn: ({ signal }) => api("GET /api/sessions/:id/report", { id: id ?? 0, signal }),
    enabled: typeof id === "number" && id > 0,
    refetchInterval: (query) => (query.state.data?.open ? 60_000 : false),
  });
}

/** One table of the report as a CSV download (the browser sends the session cookie). */
export function reportCsvUrl(id: number, table: ReportCsvTable): string {
  return apiUrl("GET /api/sessions/:id/report", { id, query: { format: "csv", table } });
}
