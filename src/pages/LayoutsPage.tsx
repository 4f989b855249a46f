import { Link } from "react-router-dom";
import type { LayoutSummary } from "@shared/contract/rest";
import { useLayouts } from "../api/layouts";
import { ImportLayoutForm } from "../components/layouts/ImportLayoutForm";
import { NewLayoutForm } from "../components/layouts/NewLayoutForm";
import { columnsFor, DataTable } from "../components/ui/DataTable";
import { Panel } from "../components/ui/Panel";
import { LoadError, Loading } from "../components/ui/Status";
import { useCurrentUser } from "../hooks/useCurrentUser";
import { can } from "../lib/permissions";
import { paths } from "../lib/paths";

const col = columnsFor<LayoutSummary>();
const columns = col.columns([
  col.accessor("name", {
    header: "Layout",
    cell: (info) => (
      <Link to={paths.layout({ slug: info.row.original.slug })} className="font-semibold text-brass underline-offset-2 hover:underline">
        {info.getValue()}
      </Link>
    ),
  }),
  col.accessor("scale", { header: "Scale", cell: (info) => `${info.getValue().name} (1:${info.getValue().ratio})` }),
  col.accessor("liveVersion", {
    header: "Live rulebook",
    cell: (info) =>
      info.row.original.archived ? (
        <span className="rounded border border-aspect-caution/70 px-1.5 text-xs font-bold uppercase text-aspect-caution">archived</span>
      ) : info.getValue() === null ? (
        <span className="text-ink-faint">none</span>
      ) : (
        `version ${info.getValue()}`
      ),
  }),
  col.accessor("detectorCount", { header: "Detectors" }),
  col.accessor("signalCount", { header: "Signals" }),
  col.accessor("nodeCount", { header: "Nodes" }),
]);

export default function LayoutsPage() {
  const user = useCurrentUser();
  const layouts = useLayouts();

  return (
    <div className="space-y-6">
      <h1 className="text-2xl font-bold">Layouts</h1>
      <Panel title="Your society's layouts">
        {layouts.isPending ? (
          <Loading what="layouts" />
        ) : layouts.isError ? (
          <LoadError error={layouts.error} what="layouts" />
        ) : (
          <DataTable caption="Layouts" columns={columns} data={layouts.data} getRowId={(l) => l.slug} empty="No layouts yet." />
        )}
      </Panel>
      {can.importLayout(user.role) ? (
        <Panel title="New layout">
          <NewLayoutForm />
        </Panel>
      ) : null}
      {can.importLayout(user.role) ? (
        <Panel title="Import a layout">
          <ImportLayoutForm />
        </Panel>
      ) : null}
    </div>
  );
}
