import { useCallback, useEffect, useMemo, useState } from "react";
import { Link, useParams, useSearchParams } from "react-router-dom";
import type { ValidationError } from "@shared/rulebook/validate";
import { LAYOUT_EDIT_ERRORS } from "@shared/contract/layoutEdit";
import { ApiError } from "../api/http";
import { useArchiveMutation, useEditableLayout, useSaveLayoutMutation } from "../api/layouts";
import { RecordsEditor } from "../components/records/RecordsEditor";
import { SaveBar } from "../components/records/SaveBar";
import type { DrawingDoc } from "../components/schematic/edits";
import { SchematicEditor } from "../components/schematic/SchematicEditor";
import { Button } from "../components/ui/Button";
import { LoadError, Loading } from "../components/ui/Status";
import { useCurrentUser } from "../hooks/useCurrentUser";
import { useDraftHistory } from "../hooks/useDraftHistory";
import { draftErrors, draftFromLayout, layoutFileFromDraft, type EditableLayout, type LayoutDraft } from "../lib/layoutDraft";
import { can } from "../lib/permissions";
import { paths } from "../lib/paths";

type Tab = "records" | "schematic";
const TABS: { id: Tab; label: string }[] = [
  { id: "records", label: "Records" },
  { id: "schematic", label: "Schematic" },
];
/** Paths the record tables show beside a field; anything else is listed at the save bar. */
const PLACED = /^\$\.(lines|detectors|signals|points|nodes)\[\d+\]/;

/** The engineer's workbench for one layout: records and drawing, saved together with their revision. */
export default function LayoutEditPage() {
  const { slug = "" } = useParams();
  const user = useCurrentUser();
  const layout = useEditableLayout(slug);
  const save = useSaveLayoutMutation(slug);
  const archive = useArchiveMutation(slug);
  const history = useDraftHistory<LayoutDraft>();
  const [search, setSearch] = useSearchParams();
  const tab: Tab = search.get("tab") === "schematic" ? "schematic" : "records";
  const [base, setBase] = useState<{ revision: number | undefined; moved: number } | null>(null);
  const [serverErrors, setServerErrors] = useState<{ for: LayoutDraft; errors: ValidationError[] } | null>(null);
  const [stale, setStale] = useState(false);
  const [saved, setSaved] = useState(false);
  const { reset } = history;

  const start = useCallback(
    (data: EditableLayout) => {
      const { draft, movedItems } = draftFromLayout(data);
      reset(draft);
      setBase({ revision: data.revision, moved: movedItems });
      setStale(false);
      setServerErrors(null);
    },
    [reset],
  );
  const loaded = layout.data;
  useEffect(() => {
    if (loaded && base === null) start(loaded);
  }, [loaded, base, start]);

  const draft = history.draft;
  const localErrors = useMemo(() => (draft ? draftErrors(draft) : []), [draft]);
  // The server's list stays beside the fields until the draft changes.
  const errors = serverErrors && serverErrors.for === draft ? serverErrors.errors : localErrors;

  if (layout.isPending || (loaded && !draft)) return <Loading what="the layout" />;
  if (layout.isError) return <LoadError error={layout.error} what="the layout" />;
  if (!draft || !loaded) return null;

  const archived = loaded.archivedAt !== null && loaded.archivedAt !== undefined;
  const readOnly = archived || !can.editLayout(user.role);

  const onSave = async () => {
    setSaved(false);
    if (localErrors.length > 0) {
      setServerErrors(null);
      return;
    }
    try {
      await save.mutateAsync({ file: layoutFileFromDraft(draft), revision: base?.revision });
      const fresh = await layout.refetch();
      if (fresh.data) start(fresh.data);
      setSaved(true);
    } catch (error) {
      if (error instanceof ApiError && error.code === LAYOUT_EDIT_ERRORS.stale) setStale(true);
      else if (error instanceof ApiError) setServerErrors({ for: draft, errors: error.fieldErrors.length > 0 ? error.fieldErrors : [{ path: "$", message: error.message }] });
      else setServerErrors({ for: draft, errors: [{ path: "$", message: String(error) }] });
    }
  };

  const reload = async () => {
    const fresh = await layout.refetch();
    if (fresh.data) start(fresh.data);
  };

  const changeDrawing = (next: DrawingDoc, gesture?: string | null) => history.change({ ...draft, ...next }, gesture ?? null);

  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-baseline justify-between gap-3">
        <div>
          <h1 className="text-2xl font-bold">Workbench — {draft.name}</h1>
          <p className="text-sm text-ink-soft">
            {draft.scale.name} scale, 1:{draft.scale.ratio} · <code>{draft.slug}</code>
            {archived ? <span className="ml-2 rounded border border-aspect-caution/70 px-1.5 text-xs font-bold uppercase text-aspect-caution">archived</span> : null}
          </p>
        </div>
        <div className="flex flex-wrap gap-2 text-sm">
          <Link className="rounded-md border border-panel-600 px-3 py-1.5 hover:bg-panel-800" to={paths.junction({ slug })}>
            New junction from a template
          </Link>
          <Link className="rounded-md border border-panel-600 px-3 py-1.5 hover:bg-panel-800" to={paths.placement({ slug })}>
            Detector placement
          </Link>
          {can.archiveLayout(user.role) ? (
            <Button tone={archived ? "plain" : "danger"} disabled={archive.isPending} onClick={() => archive.mutate(archived ? "restore" : "archive", { onSuccess: () => void reload() })}>
              {archived ? "Restore layout" : "Archive layout"}
            </Button>
          ) : null}
        </div>
      </div>
      {archive.isError ? <LoadError error={archive.error} what="archiving (nothing changed)" /> : null}
      {archived ? <p className="rounded-md border border-aspect-caution/60 p-2 text-sm">Archived: it does not run live and cannot be changed. An admin can restore it.</p> : null}
      {base && base.moved > 0 ? (
        <p className="text-sm text-ink-soft" role="status">
          This drawing had {base.moved} items placed by hand; the editor draws every item at its position in metres, so they may sit a little
          differently until you save.
        </p>
      ) : null}

      {readOnly ? null : (
        <SaveBar
          dirty={history.dirty}
          saving={save.isPending}
          revision={base?.revision}
          unplaced={errors.filter((e) => !PLACED.test(e.path))}
          problemCount={errors.length}
          stale={stale}
          saved={saved && !history.dirty}
          canUndo={history.canUndo}
          canRedo={history.canRedo}
          onSave={() => void onSave()}
          onUndo={history.undo}
          onRedo={history.redo}
          onReload={() => void reload()}
        />
      )}

      <div role="tablist" aria-label="Edit" className="flex gap-1 border-b border-panel-700">
        {TABS.map((t) => (
          <button
            key={t.id}
            type="button"
            role="tab"
            id={`layout-tab-${t.id}`}
            aria-selected={tab === t.id}
            aria-controls="layout-tab-panel"
            onClick={() => setSearch({ tab: t.id }, { replace: true })}
            className={`-mb-px rounded-t-md border px-4 py-1.5 text-sm font-semibold ${tab === t.id ? "border-panel-700 border-b-panel-950 bg-panel-900 text-brass" : "border-transparent text-ink-soft hover:text-ink"}`}
          >
            {t.label}
          </button>
        ))}
      </div>
      <div role="tabpanel" id="layout-tab-panel" aria-labelledby={`layout-tab-${tab}`}>
        {tab === "records" ? (
          <RecordsEditor draft={draft} errors={errors} readOnly={readOnly} onChange={(next) => history.change(next)} />
        ) : (
          <SchematicEditor doc={draft} readOnly={readOnly} onChange={changeDrawing} onGestureEnd={history.finishGesture} onUndo={history.undo} onRedo={history.redo} />
        )}
      </div>
    </div>
  );
}
