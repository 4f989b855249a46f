/**
 * Proving a stored rulebook version: a Prove button for engineers and admins, progress while
 * the proof runs (pushed over the socket, polled if the socket is down), Cancel, then the
 * verdict property by property with counterexamples that open in the simulator. A version's
 * stored proof is shown whenever it has one.
 */
import { useMemo, useState } from "react";
import type { ProofResultDto, StoredProofDto } from "@shared/contract/rest";
import { useLayout } from "../../api/layouts";
import { isJobRunning, useActiveProofJobs, useCancelProofMutation, useProofJob, useStartProofMutation } from "../../api/proofs";
import { useRulebookVersion } from "../../api/rulebooks";
import { useCurrentUser } from "../../hooks/useCurrentUser";
import { formatDateTime } from "../../lib/format";
import { can } from "../../lib/permissions";
import { Button } from "../ui/Button";
import { Panel } from "../ui/Panel";
import { LoadError } from "../ui/Status";
import { ProofProgress } from "./ProofProgress";
import { ProofResults } from "./ProofResults";

export interface ProofPanelProps {
  slug: string;
  version: number;
}

/** The stored proof, if the column holds one of ours (older rows may hold anything or null). */
function storedProofOf(proof: unknown): StoredProofDto | null {
  if (typeof proof !== "object" || proof === null) return null;
  const p = proof as Partial<StoredProofDto>;
  return typeof p.verdict === "string" && Array.isArray(p.properties) && typeof p.stats === "object" ? (p as StoredProofDto) : null;
}

export function ProofPanel({ slug, version }: ProofPanelProps) {
  const user = useCurrentUser();
  // Proving is part of editing a rulebook: the same roles (CONTRACT.md §6 routes agree).
  const mayProve = can.editRulebook(user.role);
  const layout = useLayout(slug);
  const stored = useRulebookVersion(slug, version);
  const active = useActiveProofJobs(slug);
  const start = useStartProofMutation(slug);
  const cancel = useCancelProofMutation();

  // The job this page started for this version, else one already running for it (another tab, another engineer).
  const [started, setStarted] = useState<{ version: number; jobId: string } | null>(null);
  const jobId = (started?.version === version ? started.jobId : null) ?? active.data?.find((j) => j.version === version)?.jobId ?? null;
  const job = useProofJob(jobId);

  const detectorNames = useMemo(() => Object.fromEntries((layout.data?.detectors ?? []).map((d) => [d.id, d.name])), [layout.data]);
  const proof = storedProofOf(stored.data?.proof);
  const running = isJobRunning(job.data);
  const endedUnstored: ProofResultDto | null =
    job.data && (job.data.state === "cancelled" || job.data.state === "failed") ? job.data.result : null;

  const prove = () =>
    start.mutate(version, {
      onSuccess: (body) => setStarted({ version, jobId: body.jobId }),
    });

  return (
    <Panel
      title={`Proof of version ${version}`}
      className="no-print"
      actions={
        mayProve && !running ? (
          <Button tone="primary" onClick={prove} disabled={start.isPending || !stored.data}>
            {start.isPending ? "Starting…" : proof ? `Prove v${version} again` : `Prove v${version}`}
          </Button>
        ) : null
      }
    >
      <div className="space-y-4">
        {start.isError ? <LoadError error={start.error} what="the proof (it did not start)" /> : null}
        {cancel.isError ? <LoadError error={cancel.error} what="the cancel request" /> : null}
        {job.isError ? <LoadError error={job.error} what="the running proof" /> : null}

        {running && job.data ? (
          <ProofProgress job={job.data} onCancel={mayProve ? () => cancel.mutate(job.data.jobId) : undefined} cancelling={cancel.isPending} />
        ) : null}

        {!running && job.data?.state === "cancelled" ? (
          <p className="text-sm text-ink-soft" role="status">
            The proof was cancelled ({job.data.result?.reason ?? "cancelled"}) after {(job.data.result?.stats.states ?? 0).toLocaleString("en-GB")} states; nothing was decided and the
            stored proof, if any, is unchanged.
          </p>
        ) : null}
        {!running && job.data?.state === "failed" ? (
          <p role="alert" className="rounded-md border border-aspect-danger/60 bg-aspect-danger/10 p-3 text-notice-error">
            The proof could not be completed: {job.data.error ?? "unknown error"}.
          </p>
        ) : null}

        {proof && stored.data ? (
          <ProofResults
            slug={slug}
            version={version}
            result={proof}
            rulebook={stored.data.rulebook}
            detectorNames={detectorNames}
            heading={`run ${formatDateTime(proof.provedAt)}${proof.by ? ` by ${proof.by}` : ""}`}
          />
        ) : endedUnstored && stored.data && endedUnstored.properties.length > 0 && job.data?.state === "failed" ? (
          <ProofResults slug={slug} version={version} result={endedUnstored} rulebook={stored.data.rulebook} detectorNames={detectorNames} />
        ) : !running ? (
          <p className="text-sm text-ink-faint">
            Version {version} has not been proved yet.
            {mayProve ? " Prove it to check every reachable state of the junction against the protection facts before publishing it." : ""}
          </p>
        ) : null}
      </div>
    </Panel>
  );
}
