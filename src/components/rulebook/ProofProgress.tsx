import type { ProofJobDto } from "@shared/contract/rest";
import { DEFAULT_MAX_STATES } from "@shared/rulebook/prove";
import { formatDuration } from "../../lib/duration";
import { useNow } from "../../hooks/useNow";
import { Button } from "../ui/Button";

const count = new Intl.NumberFormat("en-GB");

interface ProofProgressProps {
  job: ProofJobDto;
  /** Absent for roles that may not cancel. */
  onCancel?: () => void;
  cancelling?: boolean;
}

/**
 * A running proof: states explored against the state limit (the search may well finish long
 * before it), the frontier still to explore, the depth reached, and the time so far.
 */
export function ProofProgress({ job, onCancel, cancelling = false }: ProofProgressProps) {
  const now = useNow(500);
  const states = job.progress?.states ?? 0;
  const percent = Math.min(100, (states / DEFAULT_MAX_STATES) * 100);
  return (
    <div className="space-y-2" aria-live="polite">
      <div className="flex flex-wrap items-center justify-between gap-2">
        <p className="text-sm text-ink-soft">
          {job.state === "queued" ? "Waiting for a free core…" : `Proving version ${job.version}…`} {formatDuration(now - Date.parse(job.startedAt))}
        </p>
        {onCancel ? (
          <Button tone="danger" onClick={onCancel} disabled={cancelling}>
            {cancelling ? "Cancelling…" : "Cancel proof"}
          </Button>
        ) : null}
      </div>
      <div
        role="progressbar"
        aria-label="States explored, out of the limit"
        aria-valuemin={0}
        aria-valuemax={DEFAULT_MAX_STATES}
        aria-valuenow={states}
        className="h-3 overflow-hidden rounded bg-panel-800"
      >
        <div className="h-full bg-brass transition-[width]" style={{ width: `${Math.max(percent, states > 0 ? 1 : 0)}%` }} />
      </div>
      <dl className="grid grid-cols-3 gap-2 text-sm">
        <div>
          <dt className="text-ink-faint">States explored</dt>
          <dd className="font-semibold">{count.format(states)}</dd>
        </div>
        <div>
          <dt className="text-ink-faint">Frontier (still to explore)</dt>
          <dd className="font-semibold">{count.format(job.progress?.frontier ?? 0)}</dd>
        </div>
        <div>
          <dt className="text-ink-faint">Depth (moves from the start)</dt>
          <dd className="font-semibold">{job.progress?.depth ?? 0}</dd>
        </div>
      </dl>
      <p className="text-xs text-ink-faint">The search stops, unfinished, at {count.format(DEFAULT_MAX_STATES)} states or after one minute.</p>
    </div>
  );
}
