import { useMemo } from "react";
import { Link, useParams, useSearchParams } from "react-router-dom";
import { useAlarms } from "../api/alarms";
import { useLiveLayout } from "../hooks/useLiveLayout";
import { ALARM_KIND_WORDS, AlarmCard } from "../components/alarms/AlarmCard";
import { LoadError, Loading } from "../components/ui/Status";
import { useCurrentUser } from "../hooks/useCurrentUser";
import { AlarmSettingsPanel } from "../components/alarms/AlarmSettingsPanel";
import { paths } from "../lib/paths";

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
        <Link to={paths.live({ slug })} className="text-sm underline">
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
            {Object.entries(ALARM_KIND_WORDS).map(([k, words]) => (
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
        {shown.map((a) => (
          <li key={a.id} data-alarm={a.id} data-alarm-kind={a.kind}>
            <AlarmCard slug={slug} alarm={a} canAcknowledge={canAcknowledge(user.role)} />
          </li>
        ))}
      </ul>
      <AlarmSettingsPanel slug={slug} />
    </div>
  );
}
