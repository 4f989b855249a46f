import { Link } from "react-router-dom";
import type { SessionSummaryDto } from "@shared/contract/sessions";
import { formatDateTimeSeconds as formatDateTime } from "../../lib/format";
import { columnsFor, DataTable } from "../ui/DataTable";
import { paths } from "../../lib/paths";

interface SessionTableProps {
  slug: string;
  sessions: SessionSummaryDto[];
  chosen: number | undefined;
  onChoose: (id: number) => void;
}

const col = columnsFor<SessionSummaryDto>();

/** The layout's running sessions, newest first, each opening its log or its replay. */
export function SessionTable({ slug, sessions, chosen, onChoose }: SessionTableProps) {
  const columns = col.columns([
    col.accessor("id", { header: "Session", cell: (info) => `#${info.getValue()}` }),
    col.accessor("openedAt", { header: "Opened", cell: (info) => formatDateTime(info.getValue()) }),
    col.accessor("closedAt", {
      header: "Closed",
      cell: (info) => {
        const closed = info.getValue();
        return closed ? `${formatDateTime(closed)}${info.row.original.closeReason ? ` (${info.row.original.closeReason})` : ""}` : <span className="text-notice-ok">running</span>;
      },
    }),
    col.display({
      id: "who",
      header: "Started / ended by",
      cell: (info) => {
        const s = info.row.original;
        return s.importedFrom ? `imported (${s.importedFrom})` : `${s.openedBy ?? "the layout"} / ${s.closedAt ? (s.closedBy ?? "the layout") : "—"}`;
      },
    }),
    col.accessor("note", { header: "Note", cell: (info) => <span className="whitespace-pre-line">{info.getValue() ?? ""}</span> }),
    col.accessor("rulebookVersion", { header: "Rulebook", cell: (info) => (info.getValue() === null ? "—" : `v${info.getValue()}`) }),
    col.accessor("eventCount", { header: "Events", cell: (info) => info.getValue().toLocaleString("en-GB") }),
    col.display({
      id: "open",
      header: "Open",
      cell: (info) => {
        const id = info.row.original.id;
        return (
          <span className="flex flex-wrap gap-2">
            <button
              type="button"
              onClick={() => onChoose(id)}
              aria-pressed={chosen === id}
              className={`rounded border px-2 py-0.5 text-xs font-semibold ${chosen === id ? "border-brass text-brass" : "border-panel-600 hover:bg-panel-800"}`}
            >
              Event log
            </button>
            <Link to={paths.replay({ slug, id: id })} className="rounded border border-panel-600 px-2 py-0.5 text-xs font-semibold hover:bg-panel-800">
              Replay
            </Link>
            <Link to={paths.report({ slug, id: id })} className="rounded border border-panel-600 px-2 py-0.5 text-xs font-semibold hover:bg-panel-800">
              Report
            </Link>
          </span>
        );
      },
    }),
  ]);
  return <DataTable caption="Sessions" columns={columns} data={sessions} getRowId={(s) => String(s.id)} empty="No sessions yet: a session opens with the first pulse or command of a running day." />;
}
