import { useState } from "react";
import { Link, useParams, useSearchParams } from "react-router-dom";
import type { SessionEventFilter, SessionSummaryDto } from "@shared/contract/sessions";
import { useLayout } from "../api/layouts";
import { sessionExportUrl, useSessionEvents, useSessions } from "../api/sessions";
import { EventLogFilters } from "../components/sessions/EventLogFilters";
import { EventLogTable } from "../components/sessions/EventLogTable";
import { ImportEventLogForm } from "../components/sessions/ImportEventLogForm";
import { SessionTable } from "../components/sessions/SessionTable";
import { Button } from "../components/ui/Button";
import { Panel } from "../components/ui/Panel";
import { LoadError, Loading } from "../components/ui/Status";
import { useCurrentUser } from "../hooks/useCurrentUser";
import { paths } from "../lib/paths";

/** Rows per page of the event log: enough to read, few enough for a quick table. */
const PAGE_EVENTS = 100;

const linkClass = "rounded-md border border-panel-600 px-3 py-1.5 text-sm hover:bg-panel-800";

export default function SessionsPage() {
  const { slug = "" } = useParams();
  const [search, setSearch] = useSearchParams();
  const layout = useLayout(slug);
  const sessions = useSessions(slug);
  const user = useCurrentUser();
  const param = Number(search.get("session"));
  const chosen = Number.isInteger(param) && param > 0 ? param : sessions.data?.[0]?.id;

  if (layout.isPending || sessions.isPending) return <Loading what="the sessions" />;
  if (layout.isError) return <LoadError error={layout.error} what="the layout" />;
  if (sessions.isError) return <LoadError error={sessions.error} what="the sessions" />;

  const choose = (id: number) => {
    const next = new URLSearchParams(search);
    next.set("session", String(id));
    setSearch(next, { replace: true });
  };

  return (
    <div className="space-y-6">
      <h1 className="text-2xl font-bold">Sessions — {layout.data.name}</h1>
      <p className="text-sm text-ink-soft">
        Each running day is a session. Its event log keeps every message from the boards, every signaller command and every change the rulebook made.
      </p>
      {/* At the top: on a long log page it would be thousands of pixels down. */}
      {user.role === "maintainer" || user.role === "admin" ? (
        <Panel title="Import an event log">
          <ImportEventLogForm slug={slug} />
        </Panel>
      ) : null}
      <Panel title="Sessions">
        <SessionTable slug={slug} sessions={sessions.data} chosen={chosen} onChoose={choose} />
      </Panel>
      {chosen ? (
        <EventLog
          key={`${chosen}-${search.get("event") ?? ""}`}
          fromEvent={search.get("event") ?? undefined}
          slug={slug}
          session={chosen}
          summary={sessions.data.find((s) => s.id === chosen)}
          detectors={layout.data.detectors.map((d) => d.id)}
          nodes={layout.data.nodes.map((n) => n.id)}
        />
      ) : null}
    </div>
  );
}

interface EventLogProps {
  slug: string;
  /** Open the log at this event (an alarm's link). */
  fromEvent?: string;
  session: number;
  /** The session's row in the list (absent when the link names one beyond its first 200). */
  summary?: SessionSummaryDto;
  detectors: string[];
  nodes: string[];
}

/** One session's log, a keyset page at a time; the cursors of earlier pages are kept for "Previous". */
function EventLog({ slug, session, summary, detectors, nodes, fromEvent }: EventLogProps) {
  const [filter, setFilter] = useState<SessionEventFilter>({});
  const [cursors, setCursors] = useState<string[]>(() => (fromEvent && /^\d{1,18}$/.test(fromEvent) && Number(fromEvent) > 1 ? ["0", String(Number(fromEvent) - 1)] : ["0"]));
  const after = cursors[cursors.length - 1];
  const page = useSessionEvents(session, filter, after, PAGE_EVENTS);

  const changeFilter = (next: SessionEventFilter) => {
    setFilter(next);
    setCursors(["0"]);
  };

  return (
    <Panel
      title={`Event log of session #${session}`}
      actions={
        <>
          <a className={linkClass} href={sessionExportUrl(session, "jsonl")} download={`session-${session}.jsonl`}>
            Download JSONL
          </a>
          <a className={linkClass} href={sessionExportUrl(session, "csv")} download={`session-${session}.csv`}>
            Download CSV
          </a>
          <Link className={linkClass} to={paths.replay({ slug, id: session })}>
            Replay this session
          </Link>
          <Link className={linkClass} to={paths.report({ slug, id: session })}>
            Report of the day
          </Link>
        </>
      }
    >
      <div className="space-y-4">
        {summary?.importedFrom ? (
          <p role="note" className="rounded-md border border-panel-600 p-3 text-sm text-ink-soft">
            Imported from {summary.importedFrom}. The file brings the inputs only; the changes listed here are its pulses, ticks and commands replayed through
            rulebook v{summary.rulebookVersion ?? "?"} from its initial values, on the same engine as the live control room.
          </p>
        ) : null}
        <EventLogFilters filter={filter} detectors={detectors} nodes={nodes} onChange={changeFilter} />
        {page.isError ? <LoadError error={page.error} what="the event log" /> : null}
        {page.data ? (
          <>
            <div className="flex flex-wrap items-center justify-between gap-2 text-sm">
              <p role="status" className="text-ink-soft">
                {page.data.total === 0
                  ? "No events match."
                  : `Events #${page.data.events[0]?.id ?? "?"}–#${page.data.events.at(-1)?.id ?? "?"} (${page.data.events.length.toLocaleString("en-GB")} of ${page.data.total.toLocaleString("en-GB")} matching)`}
                {page.isFetching ? " (loading…)" : ""}
              </p>
              <div className="flex gap-2">
                <Button onClick={() => setCursors(["0"])} disabled={cursors.length === 1}>
                  First page
                </Button>
                <Button onClick={() => setCursors((c) => c.slice(0, -1))} disabled={cursors.length === 1}>
                  Previous page
                </Button>
                <Button onClick={() => page.data?.next && setCursors((c) => [...c, page.data.next!])} disabled={!page.data.next || page.isPlaceholderData}>
                  Next page
                </Button>
              </div>
            </div>
            <EventLogTable events={page.data.events} />
          </>
        ) : (
          <Loading what="the event log" />
        )}
      </div>
    </Panel>
  );
}
