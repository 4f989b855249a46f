/**
 * The running-day report as CSV, one table at a time (`?format=csv&table=…`): every cell a
 * plain value, so a spreadsheet opens it as it is.
 */
import type { SessionReportDto } from "@shared/contract/report";
import { guardFormula } from "./csvFormula";

export const REPORT_TABLES = ["routes", "trains", "checks", "detectors", "nodes", "alarms"] as const;
export type ReportTable = (typeof REPORT_TABLES)[number];

type Cell = string | number | boolean | null | undefined;

function cell(value: Cell): string {
  if (value === null || value === undefined) return "";
  const text = typeof value === "string" ? guardFormula(value) : String(value);
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

const toCsv = (header: string[], rows: Cell[][]) => [header, ...rows].map((r) => r.map(cell).join(",")).join("\r\n") + "\r\n";

/** One table of the report as CSV text. */
export function reportCsv(report: SessionReportDto, table: ReportTable): string {
  switch (table) {
    case "routes":
      return toCsv(
        ["route", "signal", "trains", "waits", "median_wait_s", "max_wait_s", "priority_checks"],
        report.routes.map((r) => [r.id, r.signal, r.trains, r.waits.count, r.waits.medianS, r.waits.maxS, r.id === report.priorityRoute ? report.checks.length : ""]),
      );
    case "trains": {
      const detectors = report.detectors.map((d) => d.id);
      return toCsv(
        ["train", "route", "axles", "arrived_at", "at_signal_at", "entered_at", "cleared_at", "waited_s", "mismatches", ...detectors.map((d) => `pulses_${d}`)],
        report.trains.map((t) => [t.n, t.route, t.axles, t.arrivedAt, t.atSignalAt, t.enteredAt, t.clearedAt, t.waitedS, t.mismatches.join(" "), ...detectors.map((d) => t.counts[d])]),
      );
    }
    case "checks":
      return toCsv(
        ["route", "signal", "train", "from", "until", "seconds", "event_id", "held", "faulted", "state"],
        report.checks.map((c) => [
          c.route,
          c.signal,
          c.train,
          c.from,
          c.until,
          c.seconds,
          c.eventId,
          c.held,
          c.faulted,
          [
            ...Object.entries(c.counters).map(([k, v]) => `${k}=${v}`),
            ...Object.entries(c.latches).map(([k, v]) => `${k}=${v ? "set" : "clear"}`),
            ...Object.entries(c.selectors).map(([k, v]) => `${k}=${v}`),
          ].join(" "),
        ]),
      );
    case "detectors":
      return toCsv(
        ["detector", "name", "pulses", "rejected", "duplicate", "trains", "mismatches", "stray"],
        report.detectors.map((d) => [d.id, d.name, d.pulses, d.rejected, d.duplicate, d.trains, d.mismatches, d.stray]),
      );
    case "nodes":
      return toCsv(
        ["node", "name", "offline_s", "uptime", "never_connected", "offline_periods"],
        report.nodes.map((n) => [n.id, n.name, n.offlineS, n.uptime, n.neverConnected, n.offline.map((o) => `${o.from}/${o.until}`).join(" ")]),
      );
    case "alarms":
      return toCsv(
        ["alarm", "kind", "subject", "message", "raised_at", "acknowledged_at", "cleared_at"],
        report.alarms.map((a) => [a.id, a.kind, a.subject, a.message, a.raisedAt, a.acknowledgedAt, a.clearedAt]),
      );
  }
}
