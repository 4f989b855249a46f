import { Link, useParams } from "react-router-dom";
import type { NodeDto } from "@shared/contract/rest";
import type { LayoutDetector, LayoutLine, LayoutPoints, LayoutSignal } from "@shared/layout/schema";
import { layoutExportUrl, useLayout } from "../api/layouts";
import { useMe } from "../api/auth";
import { NodeCredentials } from "../components/layouts/NodeCredentials";
import { VersionTable } from "../components/rulebook/VersionTable";
import { can } from "../lib/permissions";
import { columnsFor, DataTable } from "../components/ui/DataTable";
import { Panel } from "../components/ui/Panel";
import { LoadError, Loading } from "../components/ui/Status";
import { paths } from "../lib/paths";

const lineCol = columnsFor<LayoutLine>();
const lineColumns = lineCol.columns([lineCol.accessor("id", { header: "Id" }), lineCol.accessor("name", { header: "Name" })]);

const detectorCol = columnsFor<LayoutDetector>();
const detectorColumns = detectorCol.columns([
  detectorCol.accessor("id", { header: "Id" }),
  detectorCol.accessor("name", { header: "Name" }),
  detectorCol.accessor("line", { header: "Line" }),
  detectorCol.accessor("at", { header: "At (m)", cell: (info) => info.getValue().toFixed(2) }),
]);

const signalCol = columnsFor<LayoutSignal>();
const signalColumns = signalCol.columns([
  signalCol.accessor("id", { header: "Id" }),
  signalCol.accessor("name", { header: "Name" }),
  signalCol.accessor("line", { header: "Line" }),
  signalCol.accessor("at", { header: "At (m)", cell: (info) => info.getValue().toFixed(2) }),
  signalCol.accessor("aspects", { header: "Aspects", cell: (info) => info.getValue().join(", ") }),
]);

const pointsCol = columnsFor<LayoutPoints>();
const pointsColumns = pointsCol.columns([
  pointsCol.accessor("id", { header: "Id" }),
  pointsCol.accessor("name", { header: "Name" }),
  pointsCol.accessor("line", { header: "Line" }),
  pointsCol.accessor("at", { header: "At (m)", cell: (info) => info.getValue().toFixed(2) }),
]);

const nodeCol = columnsFor<NodeDto>();
const nodeColumns = nodeCol.columns([
  nodeCol.accessor("id", { header: "Id" }),
  nodeCol.accessor("name", { header: "Name" }),
  nodeCol.accessor("detectors", { header: "Detectors", cell: (info) => info.getValue().join(", ") || "—" }),
  nodeCol.accessor("signals", { header: "Signals", cell: (info) => info.getValue().join(", ") || "—" }),
]);

export default function LayoutOverviewPage() {
  const { slug = "" } = useParams();
  const layout = useLayout(slug);
  const me = useMe();

  if (layout.isPending) return <Loading what="the layout" />;
  if (layout.isError) return <LoadError error={layout.error} what="the layout" />;
  const l = layout.data;

  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-baseline justify-between gap-3">
        <div>
          <h1 className="text-2xl font-bold">{l.name}</h1>
          <p className="text-sm text-ink-soft">
            {l.scale.name} scale, 1:{l.scale.ratio} · <code>{l.slug}</code>
          </p>
        </div>
        <div className="flex flex-wrap gap-2 text-sm">
          <Link className="rounded-md border border-brass/70 px-3 py-1.5 font-semibold text-brass hover:bg-panel-800" to={paths.layoutEdit({ slug: l.slug })}>
            {me.data && can.importLayout(me.data.role) ? "Edit records and schematic" : "Records and schematic"}
          </Link>
          <Link className="rounded-md border border-panel-600 px-3 py-1.5 hover:bg-panel-800" to={paths.rulebook({ slug: l.slug })}>
            Rulebook
          </Link>
          <Link className="rounded-md border border-panel-600 px-3 py-1.5 hover:bg-panel-800" to={paths.simulate({ slug: l.slug })}>
            Simulator
          </Link>
          <Link className="rounded-md border border-panel-600 px-3 py-1.5 hover:bg-panel-800" to={paths.sessions({ slug: l.slug })}>
            Sessions and replay
          </Link>
          <Link className="rounded-md border border-panel-600 px-3 py-1.5 hover:bg-panel-800" to={paths.placement({ slug: l.slug })}>
            Detector placement
          </Link>
          <a className="rounded-md border border-panel-600 px-3 py-1.5 hover:bg-panel-800" href={layoutExportUrl(l.slug)} download={`${l.slug}.layout.json`}>
            Export layout file
          </a>
        </div>
      </div>
      <div className="grid gap-6 lg:grid-cols-2">
        <Panel title="Lines">
          <DataTable caption="Lines" columns={lineColumns} data={l.lines} getRowId={(r) => r.id} />
        </Panel>
        <Panel title="Points">
          <DataTable caption="Points" columns={pointsColumns} data={l.points} getRowId={(r) => r.id} empty="No points." />
        </Panel>
        <Panel title="Detectors">
          <DataTable caption="Detectors" columns={detectorColumns} data={l.detectors} getRowId={(r) => r.id} />
        </Panel>
        <Panel title="Signals">
          <DataTable caption="Signals" columns={signalColumns} data={l.signals} getRowId={(r) => r.id} />
        </Panel>
        <Panel title="Nodes" className="lg:col-span-2">
          <DataTable caption="Controller nodes" columns={nodeColumns} data={l.nodes} getRowId={(r) => r.id} empty="No controller nodes registered." />
          {me.data && can.manageNodes(me.data.role) ? (
            <div className="mt-4 border-t border-panel-700 pt-4">
              <h3 className="mb-2 font-bold">Board credentials</h3>
              <NodeCredentials layout={l} />
            </div>
          ) : null}
        </Panel>
        <Panel title="Rulebook versions" className="lg:col-span-2">
          <VersionTable versions={l.versions} />
        </Panel>
      </div>
    </div>
  );
}
