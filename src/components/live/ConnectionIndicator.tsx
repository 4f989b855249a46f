import type { ConnectionInfo } from "../../api/live";
import { useNow } from "../../hooks/useNow";
import { formatDuration } from "../../lib/duration";

const LOOK: Record<ConnectionInfo["status"], { dot: string; text: string; word: string }> = {
  // The socket only: whether the layout itself is live is the layout status beside it.
  live: { dot: "bg-aspect-clear", text: "text-ink-soft", word: "Connected" },
  connecting: { dot: "bg-aspect-caution", text: "text-aspect-caution", word: "Connecting" },
  "catching-up": { dot: "bg-aspect-caution", text: "text-aspect-caution", word: "Catching up" },
  reconnecting: { dot: "bg-aspect-danger animate-pulse", text: "text-notice-error", word: "Connection lost — reconnecting" },
  refused: { dot: "bg-aspect-danger", text: "text-notice-error", word: "Not allowed" },
};

/** The socket's state in words and a dot; while disconnected, how long the mimic has been stale. */
export function ConnectionIndicator({ connection }: { connection: ConnectionInfo }) {
  const now = useNow();
  const look = LOOK[connection.status];
  const stale = connection.status === "reconnecting" && connection.since > 0;
  return (
    <p role="status" aria-live="polite" data-connection={connection.status} className={`flex items-center gap-2 text-sm font-semibold ${look.text}`}>
      <span aria-hidden="true" className={`inline-block h-3 w-3 rounded-full ${look.dot}`} />
      {look.word}
      {stale ? <span className="font-normal text-ink-soft">(shown state is {formatDuration(now - connection.since)} old)</span> : null}
      {connection.status === "refused" && connection.message ? <span className="font-normal text-ink-soft">{connection.message}</span> : null}
    </p>
  );
}
