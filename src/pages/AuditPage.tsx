import { Link, useParams } from "react-router-dom";
import type { AuditEntryDto } from "@shared/contract/controlRoom";
import { useAudit } from "../api/audit";
import { columnsFor, DataTable } from "../components/ui/DataTable";
import { LoadError, Loading } from "../components/ui/Status";
import { formatDateTime } from "../lib/format";
import { paths } from "../lib/paths";

const show = (value: unknown) => (value === null || value === undefined ? "—" : typeof value === "object" ? JSON.stringify(value) : String(value));

const col = columnsFor<AuditEntryDto>();
const columns = col.columns([
  col.accessor("at", { header: "When", cell: (info) => formatDateTime(info.getValue()) }),
  col.accessor("user", { header: "Who", cell: (info) => info.getValue() ?? "—" }),
  col.accessor("action", { header: "What", cell: (info) => `${info.getValue()}${info.row.original.target ? ` ${info.row.original.target}` : ""}` }),
  col.accessor("reason", { header: "Why", cell: (info) => info.getValue() ?? "—" }),
  col.accessor("before", { header: "Before", cell: (info) => <code className="text-xs">{show(info.getValue())}</code> }),
  col.accessor("after", { header: "After", cell: (info) => <code className="text-xs">{show(info.getValue())}</code> }),
]);

/** Every signaller command and acknowledgement on a layout: who, when, what, why, before and after. */
export default function AuditPage() {
  const { slug = "" } = useParams();
  const audit = useAudit(slug);
  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-baseline justify-between gap-3">
        <h1 className="text-2xl font-bold">Audit log</h1>
        <Link to={paths.live({ slug })} className="text-sm underline">
          Back to the live page
        </Link>
      </div>
      {audit.isPending ? <Loading what="the audit log" /> : null}
      {audit.isError ? <LoadError error={audit.error} what="the audit log" /> : null}
      {audit.data ? <DataTable caption="Audit entries, newest first" columns={columns} data={audit.data} getRowId={(r) => String(r.id)} empty="Nothing has been done by hand on this layout yet." /> : null}
    </div>
  );
}
