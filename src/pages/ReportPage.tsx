import { Link, useParams } from "react-router-dom";
import { REPORT_CSV_TABLES, reportCsvUrl, useSessionReport } from "../api/reports";
import { AspectTimelineChart, PulsesChart, WaitsChart } from "../components/report/ReportCharts";
import { BoardUptime, ChecksTable, DetectorFigures, RouteFigures } from "../components/report/ReportTables";
import { Button } from "../components/ui/Button";
import { Panel } from "../components/ui/Panel";
import { LoadError, Loading } from "../components/ui/Status";
import { formatSeconds, formatTime } from "../lib/duration";
import { formatDateTimeSeconds } from "../lib/format";
import { paths } from "../lib/paths";

const linkClass = "rounded-md border border-panel-600 px-3 py-1.5 text-sm hover:bg-panel-800";

/**
 * The running day of one session in figures and charts, for the committee and the
 * maintainers: printed, it fits one page (print CSS in styles.css).
 */
export default function ReportPage() {
  const { slug = "", id = "" } = useParams();
  const sessionId = Number(id);
  const report = useSessionReport(Number.isInteger(sessionId) && sessionId > 0 ? sessionId : undefined);
  if (report.isPending) return <Loading what="the report" />;
  if (report.isError) return <LoadError error={report.error} what={`the report of session #${id}`} />;
  const r = report.data;
  const priority = r.routes.find((route) => route.id === r.priorityRoute);
  const checkedFor = r.checks.reduce((sum, c) => sum + c.seconds, 0);
  const mismatched = r.trains.filter((t) => t.mismatches.length > 0);

  return (
    <div className="report-page space-y-6">
      <div className="flex flex-wrap items-baseline justify-between gap-3">
        <h1 className="text-2xl font-bold">
          Running-day report — {r.layout.name}, session #{r.sessionId}
        </h1>
        <div className="no-print flex flex-wrap gap-2">
          <Button onClick={() => window.print()}>Print</Button>
          <Link className={linkClass} to={paths.sessions({ slug }, { query: { session: r.sessionId } })}>
            Event log
          </Link>
          <Link className={linkClass} to={paths.replay({ slug, id: r.sessionId })}>
            Replay
          </Link>
        </div>
      </div>
      <p className="text-sm text-ink-soft">
        {formatDateTimeSeconds(r.from)} to {formatDateTimeSeconds(r.until)}
        {r.open ? " (still running)" : ""}, rulebook v{r.rulebookVersion ?? "?"}
        {r.importedFrom ? `, imported from ${r.importedFrom}` : ""}. Figures come from replaying the session&apos;s {r.inputs.toLocaleString("en-GB")} recorded inputs
        through the rulebook and following each train from its pulses. Blocklight is an operating aid, not a certified interlocking.
      </p>

      {priority ? (
        <p role="status" data-testid="priority-summary" className={`rounded-md border p-3 text-base font-semibold ${r.checks.length ? "border-aspect-danger/70 text-notice-error" : "border-aspect-clear/60 text-notice-ok"}`}>
          {r.checks.length === 0
            ? `The ${priority.id} route (priority, signal ${priority.signal}) was never checked with the junction free.`
            : `The ${priority.id} route (priority, signal ${priority.signal}) was checked ${r.checks.length} time${r.checks.length === 1 ? "" : "s"} with the junction free, for ${formatSeconds(checkedFor)} in all.`}
        </p>
      ) : null}

      <div className="report-grid grid gap-6 xl:grid-cols-2">
        <Panel title="Trains and waits per route" className="print-plain print-keep">
          <RouteFigures report={r} />
          <div className="mt-3">
            <WaitsChart report={r} />
          </div>
        </Panel>
        <Panel title="Priority checks" className="print-plain print-keep">
          <ChecksTable report={r} slug={slug} />
        </Panel>
      </div>

      <Panel title="Aspects through the day" className="print-plain print-keep">
        <div className="space-y-4">
          {r.signals.map((signal) => (
            <div key={signal.id} data-timeline={signal.id}>
              <h3 className="text-sm font-semibold text-ink-soft">
                {signal.id} — {signal.name}
              </h3>
              <AspectTimelineChart report={r} signal={signal} />
            </div>
          ))}
        </div>
      </Panel>

      <div className="report-grid grid gap-6 xl:grid-cols-2">
        <Panel title="Detectors: pulses per train" className="print-plain print-keep">
          <PulsesChart report={r} />
          <div className="mt-3">
            <DetectorFigures report={r} />
          </div>
          {mismatched.length ? (
            <ul className="mt-3 space-y-1 text-sm text-notice-error" aria-label="Trains with an axle-count mismatch">
              {mismatched.map((t) => (
                <li key={t.n}>
                  Train #{t.n} ({t.route}, {formatTime(t.arrivedAt)}): {Object.entries(t.counts).map(([d, n]) => `${d} ${n}`).join(", ")} — mismatch at {t.mismatches.join(", ")}
                </li>
              ))}
            </ul>
          ) : (
            <p className="mt-3 text-sm text-notice-ok">Every train counted the same axles at every detector.</p>
          )}
        </Panel>
        <Panel title="Board uptime" className="print-plain print-keep">
          <BoardUptime report={r} />
          {r.alarms.length ? (
            <>
              <h3 className="mt-4 text-sm font-semibold text-ink-soft">Alarms ({r.alarms.length})</h3>
              <ul className="mt-1 space-y-1 text-sm">
                {r.alarms.map((a) => (
                  <li key={a.id}>
                    <span className="whitespace-nowrap">{formatTime(a.raisedAt)}</span> {a.message}
                  </li>
                ))}
              </ul>
            </>
          ) : null}
        </Panel>
      </div>

      <div className="no-print flex flex-wrap items-center gap-2 text-sm">
        <span className="text-ink-soft">Download as CSV:</span>
        {REPORT_CSV_TABLES.map((table) => (
          <a key={table} className={linkClass} href={reportCsvUrl(r.sessionId, table)} download={`session-${r.sessionId}-${table}.csv`}>
            {table}
          </a>
        ))}
      </div>
    </div>
  );
}
