import { useQuery } from "@tanstack/react-query";
import type { SessionReportDto } from "../../shared/contract/report";
import { http } from "./http";
import { sessionKeys } from "./sessions";

export const REPORT_CSV_TABLES = ["routes", "trains", "checks", "detectors", "nodes", "alarms"] as const;
export type ReportCsvTable = (typeof REPORT_CSV_TABLES)[number];

/** The running-day report of a session; an open session's figures grow, so it is refetched each minute. */
export function useSessionReport(id: number | undefined) {
  return useQuery({
    queryKey: [...sessionKeys.all, id ?? 0, "report"] as const,
    queryFn: ({ signal }) => http.get<SessionReportDto>(`/api/sessions/${id}/report`, signal),
    enabled: typeof id === "number" && id > 0,
    refetchInterval: (query) => (query.state.data?.open ? 60_000 : false),
  });
}

/** One table of the report as a CSV download (the browser sends the session cookie). */
export function reportCsvUrl(id: number, table: ReportCsvTable): string {
  return `/api/sessions/${id}/report?format=csv&table=${table}`;
}
