import type { PointerEvent } from "react";
import type { LayoutLine } from "@shared/layout/schema";
import { Button } from "../ui/Button";
import type { ItemKind } from "./format";
import { KIND_NOUN, type EditorMode } from "./selection";

interface SchematicToolbarProps {
  lines: LayoutLine[];
  drawnLines: Set<string>;
  mode: EditorMode;
  pendingPoints: number;
  snap: boolean;
  readOnly: boolean;
  onSnap: (on: boolean) => void;
  onDraw: (line: string) => void;
  onFinish: () => void;
  onCancel: () => void;
  onPaletteDown: (kind: ItemKind, e: PointerEvent) => void;
  /** A click that was not the end of a drag. */
  onPaletteClick: (kind: ItemKind) => void;
  onAdoptAutomatic: () => void;
}

const PALETTE: ItemKind[] = ["detectors", "signals", "points"];

/** Drawing tools: draw a line's track, new items to drag onto a track, snapping. */
export function SchematicToolbar(p: SchematicToolbarProps) {
  if (p.readOnly) return <p className="text-sm text-ink-faint">This layout is archived: the drawing is read-only.</p>;
  const undrawn = p.lines.filter((l) => !p.drawnLines.has(l.id));
  return (
    <div className="flex flex-wrap items-center gap-x-4 gap-y-2 rounded-md border border-panel-700 bg-panel-900 p-2 text-sm" role="toolbar" aria-label="Drawing tools">
      {p.mode.type === "draw" ? (
        <span className="flex flex-wrap items-center gap-2" role="status">
          <span>
            Drawing line <b className="text-brass">{p.mode.line}</b>: click the grid for each bend ({p.pendingPoints} so far), Enter to finish.
          </span>
          <Button tone="primary" onClick={p.onFinish} disabled={p.pendingPoints < 2}>
            Finish track
          </Button>
          <Button onClick={p.onCancel}>Cancel</Button>
        </span>
      ) : (
        <span className="flex flex-wrap items-center gap-1">
          <span className="text-ink-soft">Draw a track for</span>
          {p.lines.map((l) => (
            <Button key={l.id} onClick={() => p.onDraw(l.id)}>
              {`Draw ${l.id}`}
            </Button>
          ))}
          {p.lines.length === 0 ? <span className="text-ink-faint">(add a line in Records first)</span> : null}
          {undrawn.length > 0 && p.lines.length > 0 ? <Button onClick={p.onAdoptAutomatic}>Start from the automatic drawing</Button> : null}
        </span>
      )}
      <span className="flex items-center gap-1" aria-label="New items: drag onto a track, or click to place on the selected track">
        <span className="text-ink-soft">Drag onto a track:</span>
        {PALETTE.map((kind) => (
          <button
            key={kind}
            type="button"
            data-palette={kind}
            onPointerDown={(e) => p.onPaletteDown(kind, e)}
            // A click without a drag (or Enter/Space) places it on the selected track.
            onClick={() => p.onPaletteClick(kind)}
            className="cursor-grab rounded-md border border-brass/60 bg-panel-800 px-2 py-1 font-semibold text-brass hover:bg-panel-700"
          >
            {`New ${KIND_NOUN[kind].toLowerCase()}`}
          </button>
        ))}
      </span>
      <label className="flex items-center gap-1">
        <input type="checkbox" checked={p.snap} onChange={(e) => p.onSnap(e.target.checked)} />
        Snap to grid
      </label>
    </div>
  );
}
