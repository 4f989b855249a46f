import { useId, useState, type ChangeEvent, type FormEvent } from "react";
import { Link } from "react-router-dom";
import { ApiError, type FieldError } from "../../api/http";
import { useImportLayoutMutation } from "../../api/layouts";
import { Button } from "../ui/Button";
import { ErrorList } from "../ui/ErrorList";
import { paths } from "../../lib/paths";

interface PickedFile {
  name: string;
  content: unknown;
}

/**
 * Upload a `blocklight.layout/1` file. The file is read and parsed in the browser so a
 * broken file is reported at once; everything else is the server's check, whose errors
 * are listed with their JSON paths.
 */
export function ImportLayoutForm() {
  const inputId = useId();
  const [picked, setPicked] = useState<PickedFile | null>(null);
  const [errors, setErrors] = useState<FieldError[]>([]);
  const [imported, setImported] = useState<string | null>(null);
  const importLayout = useImportLayoutMutation();

  const onFile = async (event: ChangeEvent<HTMLInputElement>) => {
    setErrors([]);
    setImported(null);
    setPicked(null);
    const file = event.target.files?.[0];
    if (!file) return;
    try {
      const text = await file.text();
      setPicked({ name: file.name, content: JSON.parse(text) });
    } catch (cause) {
      setErrors([{ path: file.name, message: `Not valid JSON: ${cause instanceof Error ? cause.message : String(cause)}` }]);
    }
  };

  const onSubmit = async (event: FormEvent) => {
    event.preventDefault();
    if (!picked) return;
    setErrors([]);
    try {
      const result = await importLayout.mutateAsync(picked.content);
      setImported(result.slug);
    } catch (error) {
      if (error instanceof ApiError) {
        const listed = error.fieldErrors;
        setErrors(listed.length > 0 ? listed : [{ path: "", message: error.message }]);
      } else {
        setErrors([{ path: "", message: "The upload failed. Try again." }]);
      }
    }
  };

  return (
    <form onSubmit={onSubmit} className="space-y-3" aria-label="Import a layout">
      <div className="flex flex-wrap items-end gap-3">
        <div className="space-y-1">
          <label htmlFor={inputId} className="block text-sm font-semibold text-ink-soft">
            Layout file (JSON)
          </label>
          <input
            id={inputId}
            type="file"
            accept="application/json,.json"
            onChange={onFile}
            className="block text-sm text-ink-soft file:mr-3 file:rounded-md file:border file:border-panel-600 file:bg-panel-800 file:px-3 file:py-1.5 file:text-ink"
          />
        </div>
        <Button type="submit" tone="primary" disabled={!picked || importLayout.isPending}>
          {importLayout.isPending ? "Importing…" : "Import layout"}
        </Button>
      </div>
      <p className="text-xs text-ink-faint">
        The file's rulebook becomes version 1, published, and runs live at once.
      </p>
      <ErrorList errors={errors} title={errors.length > 1 ? `The layout was not imported: ${errors.length} problems` : "The layout was not imported"} />
      {imported ? (
        <p role="status" className="text-sm text-notice-ok">
          Imported. <Link className="underline" to={paths.layout({ slug: imported })}>Open {imported}</Link>
        </p>
      ) : null}
    </form>
  );
}
