import { useMemo } from "react";
import type { RulebookStatus, RulebookVersionSummary } from "../../../shared/contract/rest";
import { formatDateTime } from "../../lib/format";
import { columnsFor, DataTable } from "../ui/DataTable";

const STATUS_STYLE: Record<RulebookStatus, string> = {
  draft: "border-panel-600 text-ink-soft",
  proved: "border-aspect-caution/70 text-aspect-caution",
  published: "border-aspect-clear/70 text-aspect-clear",
};

export function StatusBadge({ status, live }: { status: RulebookStatus; live: boolean }) {
  return (
    <span className="inline-flex flex-wrap gap-1">
      <span className={`rounded border px-1.5 py-0.5 text-xs font-semibold uppercase ${STATUS_STYLE[status]}`}>{status}</span>
      {live ? <span className="rounded bg-aspect-clear px-1.5 py-0.5 text-xs font-bold uppercase text-panel-950">live</span> : null}
    </span>
  );
}

const col = columnsFor<RulebookVersionSummary>();

interface VersionTableProps {
  versions: RulebookVersionSummary[];
  /** When given, each row gets a button that selects it. */
  onSelect?: (version: number) => void;
  selected?: number;
}

/** Versions newest first: status, live marker, author, time and note. */
export function VersionTable({ versions, onSelect, selected }: VersionTableProps) {
  const columns = useMemo(
    () =>
      col.columns([
        col.accessor("version", {
          header: "Version",
          cell: (info) =>
            onSelect ? (
              <button
                type="button"
                onClick={() => onSelect(info.getValue())}
                aria-pressed={selected === info.getValue()}
                className={`rounded px-2 py-0.5 font-bold ${selected === info.getValue() ? "bg-brass text-panel-950" : "text-brass underline"}`}
              >
                v{info.getValue()}
              </button>
            ) : (
              <span className="font-bold">v{info.getValue()}</span>
            ),
        }),
        col.accessor("status", { header: "Status", cell: (info) => <StatusBadge status={info.getValue()} live={info.row.original.live} /> }),
        col.accessor("author", { header: "Author", cell: (info) => info.getValue() ?? "—" }),
        col.accessor("createdAt", { header: "Saved", cell: (info) => formatDateTime(info.getValue()) }),
        col.accessor("note", { header: "Note", cell: (info) => info.getValue() ?? "" }),
      ]),
    [onSelect, selected],
  );
  const sorted = useMemo(() => [...versions].sort((a, b) => b.version - a.version), [versions]);
  return <DataTable caption="Rulebook versions" columns={columns} data={sorted} getRowId={(v) => String(v.version)} empty="No rulebook versions yet." />;
}
