import { useId, useState, type FormEvent } from "react";
import { Link } from "react-router-dom";
import type { SessionImportResponse } from "@shared/contract/sessions";
import { ApiError, type FieldError } from "../../api/http";
import { useImportSessionMutation } from "../../api/sessions";
import { Button } from "../ui/Button";
import { ErrorList } from "../ui/ErrorList";
import { paths } from "../../lib/paths";

/** The server's limit (server/features/sessions/import.ts), checked here too so a huge file is not sent for nothing. */
const MAX_IMPORT_BYTES = 20 * 1024 * 1024;

const fieldClass = "block rounded-md border border-panel-600 bg-panel-950 px-2 py-1 text-sm text-ink";

/**
 * Upload an event log exported from Blocklight (JSONL or CSV) as a new session marked as
 * imported. The server checks every line and lists each problem with its line number.
 */
export function ImportEventLogForm({ slug }: { slug: string }) {
  const fileId = useId();
  const versionId = useId();
  const [file, setFile] = useState<File | null>(null);
  const [version, setVersion] = useState("");
  const [errors, setErrors] = useState<FieldError[]>([]);
  const [title, setTitle] = useState("");
  const [imported, setImported] = useState<SessionImportResponse | null>(null);
  const importLog = useImportSessionMutation(slug);

  const fail = (heading: string, list: FieldError[]) => {
    setTitle(heading);
    setErrors(list);
  };

  const onSubmit = async (event: FormEvent) => {
    event.preventDefault();
    if (!file) return;
    setErrors([]);
    setImported(null);
    if (file.size > MAX_IMPORT_BYTES) {
      fail("The event log was not imported", [{ path: file.name, message: "The file is over 20 MB." }]);
      return;
    }
    try {
      setImported(await importLog.mutateAsync({ file, rulebookVersion: version ? Number(version) : undefined }));
    } catch (error) {
      if (error instanceof ApiError) {
        const listed = error.fieldErrors;
        fail(error.message, listed.length > 0 ? listed : [{ path: "", message: error.message }]);
      } else {
        fail("The event log was not imported", [{ path: "", message: "The upload failed. Try again." }]);
      }
    }
  };

  return (
    <form onSubmit={onSubmit} className="space-y-3" aria-label="Import an event log">
      <div className="flex flex-wrap items-end gap-3">
        <div className="space-y-1">
          <label htmlFor={fileId} className="block text-sm font-semibold text-ink-soft">
            Event log (JSONL or CSV, as downloaded here)
          </label>
          <input
            id={fileId}
            type="file"
            accept=".jsonl,.ndjson,.csv,application/x-ndjson,text/csv"
            onChange={(e) => {
              setFile(e.target.files?.[0] ?? null);
              setErrors([]);
              setImported(null);
            }}
            className="block text-sm text-ink-soft file:mr-3 file:rounded-md file:border file:border-panel-600 file:bg-panel-800 file:px-3 file:py-1.5 file:text-ink"
          />
        </div>
        <div className="space-y-1">
          <label htmlFor={versionId} className="block text-sm font-semibold text-ink-soft">
            Rulebook version (optional)
          </label>
          <input
            id={versionId}
            type="number"
            min={1}
            step={1}
            inputMode="numeric"
            placeholder="live"
            value={version}
            onChange={(e) => setVersion(e.target.value)}
            className={`${fieldClass} w-28`}
          />
        </div>
        <Button type="submit" tone="primary" disabled={!file || importLog.isPending}>
          {importLog.isPending ? "Importing…" : "Import event log"}
        </Button>
      </div>
      <p className="text-xs text-ink-faint">
        The log becomes a new, closed session marked as imported; it does not touch the live layout. The replay recomputes what the rulebook changed, on the version given
        here or the live one.
      </p>
      <ErrorList errors={errors} title={title} />
      {imported ? (
        <p role="status" className="text-sm text-notice-ok">
          Imported {imported.events.toLocaleString("en-GB")} events as session #{imported.sessionId}.{" "}
          <Link className="underline" to={paths.replay({ slug, id: imported.sessionId })}>
            Replay session #{imported.sessionId}
          </Link>
        </p>
      ) : null}
    </form>
  );
}
