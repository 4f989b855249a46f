import { useMemo } from "react";
import type { RulebookStatus, RulebookVersionSummary } from "@shared/contract/rest";
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

type Verdict = RulebookVersionSummary["verdict"];

/**
 * The last proof's verdict, told apart by shape and word as well as colour: a tick for proved,
 * a cross on a danger-red fill for refuted, a hollow ring for unfinished, a dash for never.
 */
export function VerdictBadge({ verdict, provedAt }: { verdict: Verdict; provedAt?: string | null }) {
  const when = provedAt ? ` ${formatDateTime(provedAt)}` : "";
  if (verdict === "proved") {
    return (
      <span data-verdict="proved" title={`Proved${when}`} className="inline-flex items-center gap-1 rounded border border-aspect-clear/70 px-1.5 py-0.5 text-xs font-semibold text-aspect-clear">
        <span aria-hidden="true">✓</span> proved
      </span>
    );
  }
  if (verdict === "refuted") {
    return (
      <span data-verdict="refuted" title={`Refuted${when}: see its counterexample`} className="inline-flex items-center gap-1 rounded bg-aspect-danger px-1.5 py-0.5 text-xs font-bold uppercase text-white">
        <span aria-hidden="true">✗</span> refuted
      </span>
    );
  }
  if (verdict === "unfinished") {
    return (
      <span data-verdict="unfinished" title={`Stopped at a limit${when}`} className="inline-flex items-center gap-1 rounded border border-dashed border-aspect-caution/70 px-1.5 py-0.5 text-xs text-aspect-caution">
        <span aria-hidden="true">○</span> unfinished
      </span>
    );
  }
  return (
    <span data-verdict="none" className="text-xs text-ink-faint">
      — not proved
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
        col.accessor("verdict", { header: "Last proof", cell: (info) => <VerdictBadge verdict={info.getValue() ?? null} provedAt={info.row.original.provedAt} /> }),
        col.accessor("author", { header: "Author", cell: (info) => info.getValue() ?? "—" }),
        col.accessor("createdAt", { header: "Saved", cell: (info) => formatDateTime(info.getValue()) }),
        col.accessor("note", { header: "Note", cell: (info) => info.getValue() ?? "" }),
      ]),
    [onSelect, selected],
  );
  const sorted = useMemo(() => [...versions].sort((a, b) => b.version - a.version), [versions]);
  return <DataTable caption="Rulebook versions" columns={columns} data={sorted} getRowId={(v) => String(v.version)} empty="No rulebook versions yet." />;
}
