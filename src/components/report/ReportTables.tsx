import { Link } from "react-router-dom";
import type { SessionReportDto } from "@shared/contract/report";
import { formatSeconds, formatTime } from "../../lib/duration";
import { paths } from "../../lib/paths";

const th = "px-2 py-1 text-left text-xs font-semibold uppercase tracking-wide text-ink-soft";
const td = "px-2 py-1 align-top whitespace-nowrap";

/** Each time the priority route's train met danger with the junction free, with what held the signal. */
export function ChecksTable({ report, slug }: { report: SessionReportDto; slug: string }) {
  if (report.priorityRoute === null) return <p className="text-sm text-ink-faint">The rulebook names no priority route.</p>;
  if (report.checks.length === 0)
    return (
      <p role="status" className="text-sm text-notice-ok">
        No priority train met danger on a free junction in this session.
      </p>
    );
  return (
    <table className="w-full border-collapse text-sm" aria-label="Priority checks">
      <thead>
        <tr>
          {["From", "For", "Train", "What held the signal", ""].map((h) => (
            <th key={h} scope="col" className={th}>
              {h}
            </th>
          ))}
        </tr>
      </thead>
      <tbody>
        {report.checks.map((c) => (
          <tr key={`${c.from}-${c.train}`} data-check={c.train} className="border-t border-panel-700">
            <td className={td}>{formatTime(c.from)}</td>
            <td className={td}>{formatSeconds(c.seconds)}</td>
            <td className={td}>#{c.train}</td>
            <td className="px-2 py-1 align-top">
              {c.faulted ? "rulebook faulted; " : ""}
              {c.held ? `${c.signal} held by a signaller; ` : ""}
              {[
                ...Object.entries(c.counters).map(([k, v]) => `${k} = ${v}`),
                ...Object.entries(c.latches).filter(([, v]) => v).map(([k]) => `${k} set`),
                ...Object.entries(c.selectors).map(([k, v]) => `${k} = ${v}`),
              ].join(", ")}
            </td>
            <td className={`${td} no-print`}>
              <Link className="text-brass hover:underline" to={paths.replay({ slug, id: report.sessionId }, { query: { step: c.inputIndex + 1 } })}>
                Replay at {formatTime(c.from)}
              </Link>
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

export function RouteFigures({ report }: { report: SessionReportDto }) {
  return (
    <table className="w-full border-collapse text-sm" aria-label="Routes">
      <thead>
        <tr>
          {["Route", "Signal", "Trains", "Waited", "Median wait", "Longest wait"].map((h) => (
            <th key={h} scope="col" className={th}>
              {h}
            </th>
          ))}
        </tr>
      </thead>
      <tbody>
        {report.routes.map((r) => (
          <tr key={r.id} data-route={r.id} className="border-t border-panel-700">
            <td className={td}>
              {r.id}
              {r.id === report.priorityRoute ? " (priority)" : ""}
            </td>
            <td className={td}>{r.signal}</td>
            <td className={td}>{r.trains}</td>
            <td className={td}>{r.waits.count}</td>
            <td className={td}>{r.waits.medianS === null ? "—" : formatSeconds(r.waits.medianS)}</td>
            <td className={td}>{r.waits.maxS === null ? "—" : formatSeconds(r.waits.maxS)}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

export function DetectorFigures({ report }: { report: SessionReportDto }) {
  return (
    <table className="w-full border-collapse text-sm" aria-label="Detectors">
      <thead>
        <tr>
          {["Detector", "Pulses", "Trains", "Mismatches", "Stray", "Duplicate", "Rejected"].map((h) => (
            <th key={h} scope="col" className={th}>
              {h}
            </th>
          ))}
        </tr>
      </thead>
      <tbody>
        {report.detectors.map((d) => (
          <tr key={d.id} data-detector-row={d.id} className={`border-t border-panel-700 ${d.mismatches || d.stray ? "text-notice-error" : ""}`}>
            <td className={td} title={d.name}>
              {d.id}
            </td>
            <td className={td}>{d.pulses}</td>
            <td className={td}>{d.trains}</td>
            <td className={td}>{d.mismatches}</td>
            <td className={td}>{d.stray}</td>
            <td className={td}>{d.duplicate}</td>
            <td className={td}>{d.rejected}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

/** Each board's online time as a bar across the session, offline stretches dark. */
export function BoardUptime({ report }: { report: SessionReportDto }) {
  const from = Date.parse(report.from);
  const span = Math.max(1, Date.parse(report.until) - from);
  const pct = (iso: string) => ((Date.parse(iso) - from) / span) * 100;
  return (
    <ul className="space-y-2 text-sm" aria-label="Board uptime">
      {report.nodes.map((n) => (
        <li key={n.id} data-node-row={n.id} className="grid grid-cols-[10rem_1fr_9rem] items-center gap-2">
          <span title={n.name}>{n.id}</span>
          <span className="relative h-3 overflow-hidden rounded bg-aspect-clear/70 print:border print:border-black" aria-hidden="true">
            {n.offline.map((o) => (
              <span key={o.from} className="absolute inset-y-0 bg-aspect-dark print:bg-black" style={{ left: `${pct(o.from)}%`, width: `${Math.max(0.3, pct(o.until) - pct(o.from))}%` }} />
            ))}
          </span>
          <span className="whitespace-nowrap">{n.neverConnected ? "never connected" : `${Math.round(n.uptime * 1000) / 10}% up, ${formatSeconds(n.offlineS)} off`}</span>
        </li>
      ))}
    </ul>
  );
}
