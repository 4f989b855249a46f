import { useState } from "react";
import { Button } from "../ui/Button";
import { moveSignalLamp, removeTrack, removeVertex, setItemAt, setTrackMetres, type DrawingDoc } from "./edits";
import { KIND_NOUN, type Selection } from "./selection";
import { SIGNAL_OFFSET } from "../mimic/geometry";

interface SchematicInspectorProps {
  doc: DrawingDoc;
  selection: Selection;
  readOnly: boolean;
  onChange: (next: DrawingDoc, gesture?: string | null) => void;
  onSelect: (selection: Selection) => void;
}

/** A number typed in full before it is taken (Enter or leaving the field). */
function MetresInput({ label, value, onCommit, disabled }: { label: string; value: number; onCommit: (n: number) => void; disabled: boolean }) {
  const [text, setText] = useState(String(value));
  const [shown, setShown] = useState(value);
  if (shown !== value) {
    setShown(value);
    setText(String(value));
  }
  const commit = () => {
    const n = Number(text);
    if (text.trim() !== "" && Number.isFinite(n) && n >= 0) onCommit(n);
    else setText(String(value));
  };
  return (
    <label className="flex flex-col gap-0.5 text-xs font-semibold text-ink-soft">
      {label}
      <input
        type="number"
        step="0.1"
        min="0"
        value={text}
        disabled={disabled}
        onChange={(e) => setText(e.target.value)}
        onBlur={commit}
        onKeyDown={(e) => {
          if (e.key === "Enter") commit();
        }}
        className="rounded-md border border-panel-600 bg-panel-950 px-2 py-1 text-sm text-ink"
      />
    </label>
  );
}

/** What is selected, with its numbers editable: an item's `at`, a track's span in metres. */
export function SchematicInspector({ doc, selection, readOnly, onChange, onSelect }: SchematicInspectorProps) {
  if (!selection) {
    return (
      <aside aria-label="Selected" className="space-y-2 rounded-md border border-panel-700 bg-panel-900 p-3 text-sm text-ink-soft">
        <p>Select a track, bend or item to change it.</p>
        <ul className="list-disc space-y-1 pl-4 text-xs">
          <li>Drag items along a track; the position in metres follows.</li>
          <li>Double-click a track to add a bend; Delete removes the selected bend or track.</li>
          <li>Arrow keys: 10 cm along the line (Shift: 1 m); bends and labels by the grid.</li>
        </ul>
      </aside>
    );
  }
  if (selection.type === "item" || selection.type === "label") {
    const item = doc[selection.kind].find((x) => x.id === selection.id);
    if (!item) return null;
    const offset = selection.kind === "signals" ? (doc.schematic.signalOffsets[item.id] ?? [0, SIGNAL_OFFSET]) : null;
    return (
      <aside aria-label="Selected" className="space-y-2 rounded-md border border-panel-700 bg-panel-900 p-3 text-sm">
        <p className="font-bold">
          {KIND_NOUN[selection.kind]} {item.id} <span className="font-normal text-ink-soft">{item.name}</span>
        </p>
        <p className="text-ink-soft">on line {item.line}</p>
        <MetresInput label={`${item.id} at (m)`} value={item.at} disabled={readOnly} onCommit={(at) => onChange(setItemAt(doc, selection.kind, item.id, at))} />
        {offset ? (
          <Button disabled={readOnly} onClick={() => onChange(moveSignalLamp(doc, item.id, [-offset[0], -offset[1]]))}>
            Lamp to the other side
          </Button>
        ) : null}
        {selection.type === "label" ? <p className="text-xs text-ink-faint">Label selected: drag it or use the arrow keys.</p> : null}
      </aside>
    );
  }
  const track = doc.schematic.tracks[selection.track];
  if (!track) return null;
  const metres = track.metres ?? [0, 1];
  return (
    <aside aria-label="Selected" className="space-y-2 rounded-md border border-panel-700 bg-panel-900 p-3 text-sm">
      <p className="font-bold">Track of line {track.line}</p>
      <p className="text-xs text-ink-soft">{track.points.length} bends. The track spans these metres of the line; items sit along it by their position.</p>
      <div className="grid grid-cols-2 gap-2">
        <MetresInput label="Starts at (m)" value={metres[0]} disabled={readOnly} onCommit={(m) => onChange(setTrackMetres(doc, selection.track, [m, metres[1]]))} />
        <MetresInput label="Ends at (m)" value={metres[1]} disabled={readOnly} onCommit={(m) => onChange(setTrackMetres(doc, selection.track, [metres[0], m]))} />
      </div>
      <div className="flex flex-wrap gap-2">
        {selection.type === "vertex" ? (
          <Button
            disabled={readOnly || track.points.length <= 2}
            onClick={() => {
              onChange(removeVertex(doc, selection.track, selection.vertex));
              onSelect({ type: "track", track: selection.track });
            }}
          >
            Remove bend
          </Button>
        ) : null}
        <Button
          tone="danger"
          disabled={readOnly}
          onClick={() => {
            onChange(removeTrack(doc, selection.track));
            onSelect(null);
          }}
        >
          Remove track
        </Button>
      </div>
    </aside>
  );
}
