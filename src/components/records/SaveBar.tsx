import type { ValidationError } from "@shared/rulebook/validate";
import { Button } from "../ui/Button";
import { ErrorList } from "../ui/ErrorList";

interface SaveBarProps {
  dirty: boolean;
  saving: boolean;
  revision: number | undefined;
  /** Problems not shown beside a field of this page (e.g. the live rulebook's). */
  unplaced: readonly ValidationError[];
  /** How many problems the draft has in all (each shown beside its field). */
  problemCount: number;
  stale: boolean;
  saved: boolean;
  canUndo: boolean;
  canRedo: boolean;
  onSave: () => void;
  onUndo: () => void;
  onRedo: () => void;
  onReload: () => void;
}

/** Save, undo and redo for the whole draft, and what stands in the way of saving. */
export function SaveBar(p: SaveBarProps) {
  return (
    <div className="sticky top-0 z-10 space-y-2 rounded-lg border border-panel-700 bg-panel-900/95 p-3 backdrop-blur">
      <div className="flex flex-wrap items-center gap-2">
        <Button tone="primary" onClick={p.onSave} disabled={p.saving || !p.dirty}>
          {p.saving ? "Saving…" : "Save layout"}
        </Button>
        <Button onClick={p.onUndo} disabled={!p.canUndo} aria-keyshortcuts="Control+Z">
          Undo
        </Button>
        <Button onClick={p.onRedo} disabled={!p.canRedo} aria-keyshortcuts="Control+Y">
          Redo
        </Button>
        <span className="text-sm text-ink-faint" role="status">
          {p.dirty ? "Unsaved changes" : p.saved ? "Saved" : "No changes"}
          {p.revision !== undefined ? ` · revision ${p.revision}` : ""}
          {p.problemCount > 0 ? ` · ${p.problemCount} ${p.problemCount === 1 ? "problem" : "problems"} to fix` : ""}
        </span>
      </div>
      {p.stale ? (
        <div role="alert" className="flex flex-wrap items-center gap-3 rounded-md border border-aspect-caution/70 bg-aspect-caution/10 p-2 text-sm">
          <span>Someone else saved this layout first, so your changes were not saved. Reload to see theirs (your unsaved changes here are then dropped).</span>
          <Button onClick={p.onReload}>Reload the layout</Button>
        </div>
      ) : null}
      <ErrorList errors={[...p.unplaced]} title="Not saved: these problems are not about one field of this page" />
    </div>
  );
}
