import { useId, useState } from "react";
import { Link } from "react-router-dom";
import type { SessionDto } from "@shared/contract/live";
import { ApiError } from "../../api/http";
import { useSessionControlMutation } from "../../api/live";
import { formatTime } from "../../lib/duration";
import { Button } from "../ui/Button";
import { paths } from "../../lib/paths";

/** The running day: which session is open, and (for signallers and admins) start or end it with a note. */
export function SessionControl({ slug, session, canControl }: { slug: string; session: SessionDto | null; canControl: boolean }) {
  const control = useSessionControlMutation(slug);
  const [note, setNote] = useState("");
  const noteId = useId();
  const open = session !== null && session.closedAt === null;
  const act = (action: "open" | "close") =>
    control.mutate({ action, ...(note.trim() ? { note: note.trim() } : {}) }, { onSuccess: () => setNote("") });
  return (
    <div className="space-y-2 text-sm">
      <p role="status" data-session-state={open ? "open" : "closed"}>
        {open ? (
          <>
            Session #{session.id} running since {formatTime(session.openedAt)} ·{" "}
            <Link className="text-brass hover:underline" to={paths.report({ slug, id: session.id })}>
              report so far
            </Link>
          </>
        ) : (
          "No session is running: the next pulse or command opens one, or start the day here."
        )}
      </p>
      {canControl ? (
        <div className="flex flex-wrap items-end gap-2">
          <label htmlFor={noteId} className="flex flex-col gap-1">
            <span className="text-xs text-ink-soft">Note (optional)</span>
            <input id={noteId} value={note} maxLength={500} onChange={(e) => setNote(e.target.value)} className="w-72 rounded border border-panel-600 bg-panel-950 px-2 py-1" />
          </label>
          {open ? (
            <Button onClick={() => act("close")} disabled={control.isPending}>
              End running day
            </Button>
          ) : (
            <Button onClick={() => act("open")} disabled={control.isPending}>
              Start running day
            </Button>
          )}
        </div>
      ) : null}
      {control.error ? (
        <p role="alert" className="text-notice-error">
          {control.error instanceof ApiError ? control.error.message : String(control.error)}
        </p>
      ) : null}
    </div>
  );
}
