import type { LayoutStatus } from "../../lib/liveStatus";

const LOOK: Record<LayoutStatus["level"], { dot: string; text: string }> = {
  live: { dot: "bg-aspect-clear", text: "text-notice-ok" },
  "boards-offline": { dot: "bg-aspect-caution", text: "text-aspect-caution" },
  "no-boards": { dot: "bg-aspect-dark", text: "text-ink-soft" },
  "fail-safe": { dot: "bg-aspect-danger animate-pulse", text: "text-notice-error" },
};

/** The layout's own status (boards and pipeline), beside the socket's: one look says whether the junction is really live. */
export function LayoutStatusBadge({ status }: { status: LayoutStatus }) {
  const look = LOOK[status.level];
  return (
    <p role="status" aria-live="polite" data-layout-status={status.level} className={`flex items-center gap-2 text-sm font-semibold ${look.text}`}>
      <span aria-hidden="true" className={`inline-block h-3 w-3 rounded-full ${look.dot}`} />
      {status.words}
    </p>
  );
}
