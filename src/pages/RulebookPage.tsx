import { useCallback, useMemo } from "react";
import { Link, useParams, useSearchParams } from "react-router-dom";
import type { RulebookContext } from "@shared/rulebook/validate";
import { useLayout } from "../api/layouts";
import { useRulebookVersion } from "../api/rulebooks";
import { ProofPanel } from "../components/rulebook/ProofPanel";
import { PublishControl } from "../components/rulebook/PublishControl";
import { RulebookEditor } from "../components/rulebook/RulebookEditor";
import { RulebookDiffView } from "../components/rulebook/RulebookDiffView";
import { RuleList } from "../components/rulebook/RuleList";
import { StatusBadge, VersionTable } from "../components/rulebook/VersionTable";
import { Button } from "../components/ui/Button";
import { Panel } from "../components/ui/Panel";
import { SAFETY_TEXT } from "../components/ui/SafetyNote";
import { LoadError, Loading } from "../components/ui/Status";
import { useCurrentUser } from "../hooks/useCurrentUser";
import { formatDateTime } from "../lib/format";
import { can } from "../lib/permissions";
import { paths } from "../lib/paths";

export default function RulebookPage() {
  const { slug = "" } = useParams();
  const user = useCurrentUser();
  const layout = useLayout(slug);
  const [search, setSearch] = useSearchParams();

  const versions = layout.data?.versions;
  const requested = Number(search.get("v"));
  // Default to the version running live, else the newest.
  const selectedVersion = useMemo(() => {
    if (!versions || versions.length === 0) return undefined;
    if (versions.some((v) => v.version === requested)) return requested;
    return (versions.find((v) => v.live) ?? [...versions].sort((a, b) => b.version - a.version)[0]).version;
  }, [versions, requested]);
  const selected = useRulebookVersion(slug, selectedVersion);

  const select = useCallback((version: number) => setSearch({ v: String(version) }, { replace: true }), [setSearch]);

  const context = useMemo<RulebookContext>(
    () => ({
      detectors: layout.data?.detectors.map((d) => d.id) ?? [],
      signals: layout.data?.signals.map((s) => ({ id: s.id, aspects: s.aspects })) ?? [],
      points: layout.data?.points.map((p) => ({ id: p.id, worked: p.worked ?? "hand" })) ?? [],
      reportedPoints: layout.data?.nodes.flatMap((n) => (n as { points?: string[] }).points ?? []) ?? [],
    }),
    [layout.data],
  );

  if (layout.isPending) return <Loading what="the layout" />;
  if (layout.isError) return <LoadError error={layout.error} what="the layout" />;

  const version = selected.data;
  const mayEdit = can.editRulebook(user.role);

  return (
    <div className="space-y-6">
      <div className="no-print flex flex-wrap items-baseline justify-between gap-3">
        <h1 className="text-2xl font-bold">Rulebook — {layout.data.name}</h1>
        <div className="flex flex-wrap gap-2">
          <Button onClick={() => window.print()} disabled={!version}>
            Print rules
          </Button>
          <Link to={paths.simulate({ slug }, { query: { version: version?.version } })} className="rounded-md border border-panel-600 px-3 py-1.5 text-sm font-semibold hover:bg-panel-800">
            Simulate this version
          </Link>
        </div>
      </div>

      <Panel title="Versions" className="no-print">
        <VersionTable versions={layout.data.versions} onSelect={select} selected={selectedVersion} />
      </Panel>

      {selectedVersion === undefined ? (
        <p className="text-ink-faint">This layout has no rulebook yet.</p>
      ) : selected.isPending ? (
        <Loading what={`rulebook version ${selectedVersion}`} />
      ) : selected.isError ? (
        <LoadError error={selected.error} what={`rulebook version ${selectedVersion}`} />
      ) : version ? (
        <>
          <Panel
            title={`Rules of version ${version.version}`}
            className="print-plain"
            actions={
              <span className="no-print flex items-center gap-2">
                <StatusBadge status={version.status} live={version.live} />
                {can.publishRulebook(user.role) ? <PublishControl slug={slug} layoutName={layout.data.name} version={version} /> : null}
              </span>
            }
          >
            {/* Heading for the clubroom wall copy: the screen shows this in the panel title. */}
            <div className="print-only mb-4">
              <p className="text-xl font-bold">
                {layout.data.name} — rulebook version {version.version} ({version.status}
                {version.live ? ", live" : ""})
              </p>
              <p className="text-sm">
                Saved {formatDateTime(version.createdAt)}
                {version.author ? ` by ${version.author}` : ""}. Printed {formatDateTime(new Date().toISOString())}.
              </p>
            </div>
            <RuleList rulebook={version.rulebook} />
            <p className="print-only mt-4 text-xs">{SAFETY_TEXT}</p>
          </Panel>
          <RulebookDiffView slug={slug} versions={layout.data.versions} current={version} />
          <ProofPanel slug={slug} version={version.version} />
          {mayEdit ? (
            <Panel title="Edit as a new draft" className="no-print">
              <RulebookEditor slug={slug} context={context} selected={version} onSaved={select} />
            </Panel>
          ) : null}
        </>
      ) : null}
    </div>
  );
}
