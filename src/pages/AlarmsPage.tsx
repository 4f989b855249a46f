import { useMemo } from "react";
import { Link, useParams, useSearchParams } from "react-router-dom";
import type { AlarmKind } from "../../shared/contract/live";
import { useAlarms } from "../api/alarms";
import { useLiveLayout } from "../hooks/useLiveLayout";
import { AcknowledgeForm } from "../components/alarms/AcknowledgeForm";
import { Panel } from "../components/ui/Panel";
import { LoadError, Loading } from "../components/ui/Status";
import { useCurrentUser } from "../hooks/useCurrentUser";
import { formatDateTimeSeconds as formatDateTime } from "../lib/format";
import { AlarmSettingsPanel } from "../components/alarms/AlarmSettingsPanel";

const KIND_WORDS: Record<AlarmKind, string> = {
  stuck: "Stuck latch or counter",
  "node-offline": "Node offline",
  "detector-silent": "Detector silent",
  chatter: "Detector chatter",
  "axle-mismatch": "Axle-count mismatch",
  "missed-pulses": "Missed pulses",
  "lamp-proving": "Lamp proving",
  "rule-loop": "Rule loop",
  "count-underflow": "Count underflow",
  rulebook: "Rulebook alarm",
};

const canAcknowledge = (role: string) => role === "signaller" || role === "maintainer" || role === "admin";

/** Alarms of one layout, filtered by state and kind; acknowledge with a comment. */
export default function AlarmsPage() {
  const { slug = "" } = useParams();
  const user = useCurrentUser();
  const [search, setSearch] = useSearchParams();
  const state = search.get("state") === "all" ? "all" : "open";
  const kind = search.get("kind") ?? "";
  const alarms = useAlarms(slug, state);
  // Joining the live room keeps this list fresh: alarm pushes invalidate it.
  useLiveLayout(slug);

  const shown = useMemo(() => (alarms.data ?? []).filter((a) => !kind || a.kind === kind), [alarms.data, kind]);
  const setFilter = (key: string, value: string) => {
    const next = new URLSearchParams(search);
    if (value) next.set(key, value);
    else next.delete(key);
    setSearch(next, { replace: true });
  };

  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-baseline justify-between gap-3">
        <h1 className="text-2xl font-bold">Alarms</h1>
        <Link to={`/layouts/${slug}/live`} className="text-sm underline">
          Back to the live page
        </Link>
      </div>
      <div className="flex flex-wrap gap-4">
        <label className="text-sm">
          <span className="mr-2 text-ink-soft">State</span>
          <select value={state} onChange={(e) => setFilter("state", e.target.value === "open" ? "" : e.target.value)} className="rounded-md border border-panel-600 bg-panel-900 px-2 py-1">
            <option value="open">Open or not yet acknowledged</option>
            <option value="all">All</option>
          </select>
        </label>
        <label className="text-sm">
          <span className="mr-2 text-ink-soft">Kind</span>
          <select value={kind} onChange={(e) => setFilter("kind", e.target.value)} className="rounded-md border border-panel-600 bg-panel-900 px-2 py-1">
            <option value="">Every kind</option>
            {Object.entries(KIND_WORDS).map(([k, words]) => (
              <option key={k} value={k}>
                {words}
              </option>
            ))}
          </select>
        </label>
      </div>
      {alarms.isPending ? <Loading what="alarms" /> : null}
      {alarms.isError ? <LoadError error={alarms.error} what="alarms" /> : null}
      {alarms.data && shown.length === 0 ? <p className="text-ink-soft">No alarms match.</p> : null}
      <ul className="space-y-3" aria-label="Alarms">
        {shown.map((a) => {
          const attention = !a.acknowledgedAt && !a.clearedAt;
          return (
            <li key={a.id} data-alarm={a.id} data-alarm-kind={a.kind}>
              <Panel
                title={`${KIND_WORDS[a.kind] ?? a.kind}${a.subject ? ` — ${a.subject}` : ""}`}
                className={attention ? "border-2 border-aspect-danger" : ""}
                actions={
                  <span className={`rounded px-2 py-0.5 text-xs font-semibold ${a.clearedAt ? "bg-panel-700 text-ink-soft" : attention ? "bg-aspect-danger text-white" : "bg-aspect-caution text-panel-950"}`}>
                    {a.clearedAt ? "cleared" : a.acknowledgedAt ? "acknowledged" : "needs attention"}
                  </span>
                }
              >
                <p className="text-ink">{a.message}</p>
                <p className="mt-1 text-sm text-ink-faint">
                  Raised {formatDateTime(a.raisedAt)}
                  {a.clearedAt ? ` · cleared ${formatDateTime(a.clearedAt)}` : ""}
                  {a.acknowledgedAt ? ` · acknowledged ${formatDateTime(a.acknowledgedAt)} by ${a.acknowledgedBy ?? "someone"}` : ""}
                </p>
                {a.comment ? <p className="mt-1 text-sm text-ink-soft">“{a.comment}”</p> : null}
                <p className="mt-1 flex flex-wrap gap-3 text-sm">
                  {a.sessionId && a.eventId ? (
                    <Link className="text-brass hover:underline" to={`/layouts/${slug}/sessions?session=${a.sessionId}&event=${a.eventId}`}>
                      Event #{a.eventId} in the log
                    </Link>
                  ) : null}
                  {a.sessionId ? (
                    <Link className="text-brass hover:underline" to={`/layouts/${slug}/sessions?session=${a.sessionId}`}>
                      Session #{a.sessionId}
                    </Link>
                  ) : null}
                  <Link className="text-brass hover:underline" to={`/layouts/${slug}/live${a.subject ? `#${encodeURIComponent(a.subject)}` : ""}`}>
                    On the mimic
                  </Link>
                </p>
                {!a.acknowledgedAt && canAcknowledge(user.role) ? (
                  <div className="mt-3">
                    <AcknowledgeForm alarm={a} />
                  </div>
                ) : null}
              </Panel>
            </li>
          );
        })}
      </ul>
      <AlarmSettingsPanel slug={slug} />
    </div>
  );
}
