import { useEffect, useMemo, useRef, useState, type KeyboardEvent, type PointerEvent as ReactPointerEvent } from "react";
import { layoutGeometry, labelKey } from "../mimic/geometry";
import { addTrack, insertVertex, itemPoint, moveItemTo, moveLabel, moveVertex, placeNewItem, removeTrack, removeVertex, setItemAt, type DrawingDoc } from "./edits";
import { serializeSchematic, type ItemKind, type Pt } from "./format";
import { clientToSvg } from "./pointer";
import { SchematicInspector } from "./SchematicInspector";
import { SchematicMarks } from "./SchematicMarks";
import { SchematicToolbar } from "./SchematicToolbar";
import type { EditorMode, Selection } from "./selection";
import { AT_STEP_M, isArrowKey, nudge, snapToGrid } from "./snap";

export interface SchematicEditorProps {
  doc: DrawingDoc;
  /** A new document; `gesture` groups a drag's many moves into one undo step. */
  onChange: (next: DrawingDoc, gesture?: string | null) => void;
  onGestureEnd: () => void;
  onUndo: () => void;
  onRedo: () => void;
  readOnly?: boolean;
}

type Drag =
  | { type: "item"; kind: ItemKind; id: string }
  | { type: "label"; kind: ItemKind; id: string; anchor: Pt; grab: Pt }
  | { type: "vertex"; track: number; vertex: number }
  | { type: "palette"; kind: ItemKind };

const MIN_AREA = { x0: -40, y0: -40, x1: 1160, y1: 440 };
const AREA_MARGIN = 120;
/** One metre with Shift: for long moves from the keyboard. */
const AT_STEP_COARSE_M = 1;

/**
 * The schematic editor: draw each line's track on a grid, drag detectors, signals and
 * points onto tracks (their `at` follows), move labels, bend tracks; everything also from
 * the keyboard (Tab to an item, arrow keys, Delete, Ctrl+Z / Ctrl+Y). Edits are whole
 * documents, kept in the page's undo history.
 */
export function SchematicEditor({ doc, onChange, onGestureEnd, onUndo, onRedo, readOnly = false }: SchematicEditorProps) {
  const svgRef = useRef<SVGSVGElement>(null);
  const [mode, setMode] = useState<EditorMode>({ type: "select" });
  const [selection, setSelection] = useState<Selection>(null);
  const [pending, setPending] = useState<Pt[]>([]);
  const [snap, setSnap] = useState(true);
  const [ghost, setGhost] = useState<{ kind: ItemKind; at: Pt } | null>(null);
  const [notice, setNotice] = useState<string | null>(null);
  const grid = doc.schematic.grid;
  const snapGrid = snap ? grid : null;

  // Window listeners live for one drag; they read the newest document and callbacks from here.
  const latest = useRef({ doc, snapGrid, onChange, onGestureEnd });
  useEffect(() => {
    latest.current = { doc, snapGrid, onChange, onGestureEnd };
  }, [doc, snapGrid, onChange, onGestureEnd]);

  const ids = useMemo(() => ({ detectors: doc.detectors.map((d) => d.id), signals: doc.signals.map((s) => s.id), points: doc.points.map((p) => p.id) }), [doc.detectors, doc.signals, doc.points]);
  const geometry = useMemo(
    () => layoutGeometry({ lines: doc.lines, detectors: doc.detectors, signals: doc.signals, points: doc.points, schematic: serializeSchematic(doc.schematic, ids) }),
    [doc, ids],
  );
  const drawnLines = useMemo(() => new Set(doc.schematic.tracks.map((t) => t.line)), [doc.schematic.tracks]);

  // A stable working area: it grows with the tracks but never jumps while dragging items.
  const area = useMemo(() => {
    const all = doc.schematic.tracks.flatMap((t) => t.points);
    const xs = all.map((p) => p[0]);
    const ys = all.map((p) => p[1]);
    return {
      x0: Math.min(MIN_AREA.x0, ...xs.map((x) => x - AREA_MARGIN)),
      y0: Math.min(MIN_AREA.y0, ...ys.map((y) => y - AREA_MARGIN)),
      x1: Math.max(MIN_AREA.x1, ...xs.map((x) => x + AREA_MARGIN)),
      y1: Math.max(MIN_AREA.y1, ...ys.map((y) => y + AREA_MARGIN)),
    };
  }, [doc.schematic.tracks]);

  const toSvg = (e: { clientX: number; clientY: number }): Pt | null => (svgRef.current ? clientToSvg(svgRef.current, e.clientX, e.clientY) : null);

  const dragRef = useRef<Drag | null>(null);
  // Whether the last palette press moved onto the drawing (a drop) or was a plain click.
  const paletteMoved = useRef(false);
  const pointer = useMemo(() => {
    function move(e: PointerEvent) {
      const drag = dragRef.current;
      const svg = svgRef.current;
      if (!drag || !svg) return;
      const p = clientToSvg(svg, e.clientX, e.clientY);
      const { doc: d, snapGrid: g, onChange: change } = latest.current;
      if (drag.type === "item") change(moveItemTo(d, drag.kind, drag.id, p, g), `move:${drag.kind}:${drag.id}`);
      else if (drag.type === "vertex") change(moveVertex(d, drag.track, drag.vertex, p, g), `vertex:${drag.track}:${drag.vertex}`);
      else if (drag.type === "label") {
        const offset: Pt = [p[0] - drag.anchor[0] - drag.grab[0], p[1] - drag.anchor[1] - drag.grab[1]];
        change(moveLabel(d, drag.kind, drag.id, g ? snapToGrid(offset, g / 4) : offset), `label:${drag.kind}:${drag.id}`);
      } else {
        paletteMoved.current = true;
        setGhost({ kind: drag.kind, at: p });
      }
    }
    function up(e: PointerEvent) {
      const drag = dragRef.current;
      dragRef.current = null;
      stop();
      setGhost(null);
      const { doc: d, snapGrid: g, onChange: change, onGestureEnd: end } = latest.current;
      const box = svgRef.current?.getBoundingClientRect();
      const overDrawing = box ? e.clientX >= box.left && e.clientX <= box.right && e.clientY >= box.top && e.clientY <= box.bottom : false;
      if (drag?.type === "palette" && svgRef.current && overDrawing) {
        const placed = placeNewItem(d, drag.kind, clientToSvg(svgRef.current, e.clientX, e.clientY), g);
        if (placed) {
          change(placed.doc);
          setSelection({ type: "item", kind: drag.kind, id: placed.id });
          setNotice(null);
        } else setNotice("Drop it on a drawn track: draw the line's track first.");
      }
      end();
    }
    function start(drag: Drag) {
      dragRef.current = drag;
      window.addEventListener("pointermove", move);
      window.addEventListener("pointerup", up);
    }
    function stop() {
      window.removeEventListener("pointermove", move);
      window.removeEventListener("pointerup", up);
    }
    return { start, stop };
  }, []);
  useEffect(() => pointer.stop, [pointer]);

  const startDrag = (drag: Drag, e: ReactPointerEvent) => {
    if (readOnly || mode.type !== "select" || e.button !== 0) return;
    e.preventDefault();
    e.stopPropagation();
    pointer.start(drag);
  };

  const onBackgroundPointerDown = (e: ReactPointerEvent) => {
    if (readOnly) return;
    if (mode.type === "draw") {
      const p = toSvg(e);
      if (p) setPending((list) => [...list, snapGrid ? snapToGrid(p, snapGrid) : p]);
      return;
    }
    setSelection(null);
  };

  const finishTrack = () => {
    if (mode.type !== "draw") return;
    if (pending.length >= 2) {
      const next = addTrack(doc, mode.line, pending);
      onChange(next);
      setSelection({ type: "track", track: next.schematic.tracks.length - 1 });
    }
    setPending([]);
    setMode({ type: "select" });
  };

  const onKey = (e: KeyboardEvent) => {
    if (readOnly) return;
    const sel = selection;
    if (isArrowKey(e.key) && sel) {
      e.preventDefault();
      if (sel.type === "item") {
        const item = doc[sel.kind].find((x) => x.id === sel.id);
        const step = (e.shiftKey ? AT_STEP_COARSE_M : AT_STEP_M) * (e.key === "ArrowLeft" || e.key === "ArrowDown" ? -1 : 1);
        // Each key press is its own undo step.
        if (item) onChange(setItemAt(doc, sel.kind, sel.id, Math.max(0, Number((item.at + step).toFixed(6)))));
      } else if (sel.type === "label") {
        const current = geometry.labelOffsets[labelKey(sel.kind, sel.id)] ?? [0, 0];
        onChange(moveLabel(doc, sel.kind, sel.id, nudge(current, e.key, grid / 4, e.shiftKey)));
      } else if (sel.type === "vertex") {
        const v = doc.schematic.tracks[sel.track]?.points[sel.vertex];
        if (v) onChange(moveVertex(doc, sel.track, sel.vertex, nudge(v, e.key, grid, e.shiftKey), null));
      }
      return;
    }
    if ((e.key === "Delete" || e.key === "Backspace") && sel) {
      if (sel.type === "vertex") {
        e.preventDefault();
        onChange(removeVertex(doc, sel.track, sel.vertex));
        setSelection({ type: "track", track: sel.track });
      } else if (sel.type === "track") {
        e.preventDefault();
        onChange(removeTrack(doc, sel.track));
        setSelection(null);
      }
    }
  };

  const onRootKey = (e: KeyboardEvent) => {
    const mod = e.ctrlKey || e.metaKey;
    if (mod && e.key.toLowerCase() === "z") {
      e.preventDefault();
      if (e.shiftKey) onRedo();
      else onUndo();
    } else if (mod && e.key.toLowerCase() === "y") {
      e.preventDefault();
      onRedo();
    } else if (mode.type === "draw" && e.key === "Enter") {
      e.preventDefault();
      finishTrack();
    } else if (e.key === "Escape") {
      setPending([]);
      setMode({ type: "select" });
      setSelection(null);
    } else if (!isArrowKey(e.key)) return;
    // Arrow keys were handled by the focused mark; keep the page from scrolling.
  };

  /** Keyboard and click alternative to dragging from the palette: onto the selected (or first) track's middle. */
  const placeFromPalette = (kind: ItemKind) => {
    const trackIndex = selection?.type === "track" || selection?.type === "vertex" ? selection.track : 0;
    const track = doc.schematic.tracks[trackIndex];
    if (!track) return setNotice("Draw a line's track first, then place items on it.");
    const mid = track.points[Math.floor(track.points.length / 2)];
    const prev = track.points[Math.floor(track.points.length / 2) - 1] ?? mid;
    const placed = placeNewItem(doc, kind, [(mid[0] + prev[0]) / 2, (mid[1] + prev[1]) / 2], null);
    if (placed) {
      onChange(placed.doc);
      setSelection({ type: "item", kind, id: placed.id });
    }
  };

  const w = area.x1 - area.x0;
  const hgt = area.y1 - area.y0;
  return (
    <div className="space-y-3" onKeyDown={onRootKey}>
      <SchematicToolbar
        lines={doc.lines}
        drawnLines={drawnLines}
        mode={mode}
        pendingPoints={pending.length}
        snap={snap}
        readOnly={readOnly}
        onSnap={setSnap}
        onDraw={(line) => {
          setPending([]);
          setSelection(null);
          setMode({ type: "draw", line });
        }}
        onFinish={finishTrack}
        onCancel={() => {
          setPending([]);
          setMode({ type: "select" });
        }}
        onPaletteDown={(kind, e) => {
          if (readOnly || e.button !== 0) return;
          e.preventDefault();
          paletteMoved.current = false;
          pointer.start({ type: "palette", kind });
        }}
        onPaletteClick={(kind) => {
          const dropped = paletteMoved.current;
          paletteMoved.current = false;
          if (!dropped) placeFromPalette(kind);
        }}
        onAdoptAutomatic={() => {
          const auto = geometry.tracks.filter((t) => !drawnLines.has(t.line));
          let next = doc;
          for (const t of auto) next = addTrack(next, t.line, t.points.map((p) => snapToGrid(p, 1)));
          onChange(next);
        }}
      />
      {notice ? (
        <p role="status" className="text-sm text-aspect-caution">
          {notice}
        </p>
      ) : null}
      <div className="grid gap-3 lg:grid-cols-[1fr_18rem]">
        <svg
          ref={svgRef}
          role="application"
          aria-label="Schematic editor: Tab to an item, arrow keys move it; Ctrl+Z undoes"
          aria-roledescription="schematic editor"
          data-mode={mode.type}
          viewBox={`${area.x0} ${area.y0} ${w} ${hgt}`}
          className={`block h-auto w-full touch-none select-none rounded-lg border border-panel-700 bg-panel-950 ${mode.type === "draw" ? "cursor-crosshair" : ""}`}
          fontFamily='"JetBrains Mono", ui-monospace, monospace'
        >
          <defs>
            <pattern id="bl-grid" width={grid} height={grid} patternUnits="userSpaceOnUse" x={0} y={0}>
              <circle cx={0} cy={0} r={1.2} fill="#283746" />
            </pattern>
          </defs>
          <rect data-canvas="background" x={area.x0} y={area.y0} width={w} height={hgt} fill="url(#bl-grid)" onPointerDown={onBackgroundPointerDown} />
          {geometry.labels.map((l, i) => (
            <text key={i} x={l.at[0]} y={l.at[1]} fill="#7f8fa0" fontSize={12} aria-hidden="true" pointerEvents="none">
              {l.text}
            </text>
          ))}
          <SchematicMarks
            doc={doc}
            geometry={geometry}
            selection={selection}
            drawnLines={drawnLines}
            readOnly={readOnly}
            onKey={onKey}
            onFocusSelect={setSelection}
            onItemPointerDown={(kind, id, e) => {
              setSelection({ type: "item", kind, id });
              startDrag({ type: "item", kind, id }, e);
            }}
            onLabelPointerDown={(kind, id, e) => {
              setSelection({ type: "label", kind, id });
              const anchor = (kind === "signals" ? geometry.signals[id] : itemPoint(doc, kind, id)) ?? [0, 0];
              const p = toSvg(e) ?? anchor;
              const current = geometry.labelOffsets[labelKey(kind, id)] ?? [0, 0];
              startDrag({ type: "label", kind, id, anchor, grab: [p[0] - anchor[0] - current[0], p[1] - anchor[1] - current[1]] }, e);
            }}
            onTrackPointerDown={(track, e) => {
              if (mode.type === "draw") return onBackgroundPointerDown(e);
              e.stopPropagation();
              setSelection({ type: "track", track });
            }}
            onTrackDoubleClick={(track, e) => {
              const p = toSvg(e);
              if (p && !readOnly) onChange(insertVertex(doc, track, p, snapGrid));
            }}
            onVertexPointerDown={(track, vertex, e) => {
              setSelection({ type: "vertex", track, vertex });
              startDrag({ type: "vertex", track, vertex }, e);
            }}
          />
          {pending.length > 0 ? (
            <g aria-hidden="true" pointerEvents="none">
              <polyline points={pending.map((p) => p.join(",")).join(" ")} fill="none" stroke="#d9b35f" strokeWidth={4} strokeDasharray="6 4" />
              {pending.map((p, i) => (
                <circle key={i} cx={p[0]} cy={p[1]} r={5} fill="#d9b35f" />
              ))}
            </g>
          ) : null}
          {ghost ? <circle cx={ghost.at[0]} cy={ghost.at[1]} r={10} fill="#d9b35f" fillOpacity={0.4} stroke="#d9b35f" aria-hidden="true" pointerEvents="none" /> : null}
        </svg>
        <SchematicInspector doc={doc} selection={selection} readOnly={readOnly} onChange={onChange} onSelect={setSelection} />
      </div>
    </div>
  );
}
