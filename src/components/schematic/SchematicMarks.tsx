import type { KeyboardEvent, PointerEvent } from "react";
import { labelKey, type Geometry } from "../mimic/geometry";
import type { DrawingDoc } from "./edits";
import type { ItemKind, Pt } from "./format";
import { KIND_NOUN, type Selection } from "./selection";

const INK = "#e4ebf2";
const INK_FAINT = "#7f8fa0";
const BRASS = "#d9b35f";
const TRACK = "#3a4b5c";
const DANGER = "#ef3b34";

const DEFAULT_LABEL: Record<ItemKind, Pt> = { detectors: [0, 24], signals: [17, 5], points: [0, -12] };

export interface MarkHandlers {
  onItemPointerDown: (kind: ItemKind, id: string, e: PointerEvent) => void;
  onLabelPointerDown: (kind: ItemKind, id: string, e: PointerEvent) => void;
  onTrackPointerDown: (track: number, e: PointerEvent) => void;
  onTrackDoubleClick: (track: number, e: React.MouseEvent) => void;
  onVertexPointerDown: (track: number, vertex: number, e: PointerEvent) => void;
  onKey: (e: KeyboardEvent) => void;
  onFocusSelect: (selection: Selection) => void;
}

interface SchematicMarksProps extends MarkHandlers {
  doc: DrawingDoc;
  geometry: Geometry;
  selection: Selection;
  /** Lines drawn automatically (no track of their own yet): shown faint, not editable. */
  drawnLines: Set<string>;
  readOnly: boolean;
}

const pts = (p: Pt[]) => p.map((q) => `${q[0]},${q[1]}`).join(" ");
const isSel = (s: Selection, type: string, kind: string, id: string) => s !== null && s.type === type && "kind" in s && s.kind === kind && s.id === id;

/** Tracks, vertices, items and their labels of the editor, each focusable and draggable. */
export function SchematicMarks({ doc, geometry, selection, drawnLines, readOnly, ...h }: SchematicMarksProps) {
  const focusable = readOnly ? -1 : 0;
  const item = (kind: ItemKind, id: string, name: string, line: string, at: number, p: Pt | undefined, mark: React.ReactNode, post?: Pt) => {
    if (!p) return null;
    const selected = isSel(selection, "item", kind, id);
    const label = geometry.labelOffsets[labelKey(kind, id)] ?? DEFAULT_LABEL[kind];
    const labelSelected = isSel(selection, "label", kind, id);
    return (
      <g key={`${kind}:${id}`}>
        {post ? <line x1={post[0]} y1={post[1]} x2={p[0]} y2={p[1]} stroke={INK_FAINT} strokeWidth={2} aria-hidden="true" pointerEvents="none" /> : null}
        <g
          role="button"
          tabIndex={focusable}
          aria-label={`${KIND_NOUN[kind]} ${id}, ${name}, on ${line} at ${at.toFixed(1)} m`}
          aria-pressed={selected}
          aria-keyshortcuts="ArrowLeft ArrowRight"
          data-item={`${kind}:${id}`}
          data-at={at}
          transform={`translate(${p[0]} ${p[1]})`}
          className={readOnly ? "" : "cursor-grab"}
          onPointerDown={(e) => h.onItemPointerDown(kind, id, e)}
          onFocus={() => h.onFocusSelect({ type: "item", kind, id })}
          onKeyDown={h.onKey}
        >
          <title>{`${name}: drag along a track, or arrow keys (Shift for 1 m)`}</title>
          {selected ? <circle r={18} fill={BRASS} fillOpacity={0.15} stroke={BRASS} strokeWidth={2} /> : null}
          {mark}
        </g>
        <text
          role="button"
          tabIndex={focusable}
          aria-label={`Label of ${KIND_NOUN[kind].toLowerCase()} ${id}`}
          aria-pressed={labelSelected}
          data-label={`${kind}:${id}`}
          x={p[0] + label[0]}
          y={p[1] + label[1]}
          textAnchor={kind === "signals" ? "start" : "middle"}
          fill={labelSelected ? BRASS : INK}
          fontSize={kind === "signals" ? 15 : 12}
          fontWeight={700}
          className={readOnly ? "" : "cursor-move"}
          onPointerDown={(e) => h.onLabelPointerDown(kind, id, e)}
          onFocus={() => h.onFocusSelect({ type: "label", kind, id })}
          onKeyDown={h.onKey}
        >
          {id}
        </text>
      </g>
    );
  };

  return (
    <>
      {geometry.tracks.map((t, i) => {
        // Lines with no track of their own are drawn automatically and cannot be edited as such.
        const own = drawnLines.has(t.line);
        const trackIndex = own ? trackIndexOf(doc, t) : -1;
        const selected = selection?.type === "track" || selection?.type === "vertex" ? selection.track === trackIndex : false;
        return (
          <g key={`track-${i}`}>
            <polyline points={pts(t.points)} fill="none" stroke={own ? TRACK : "#283746"} strokeDasharray={own ? undefined : "10 8"} strokeWidth={7} strokeLinecap="round" strokeLinejoin="round" aria-hidden="true" pointerEvents="none" />
            {own ? (
              <polyline
                role="button"
                tabIndex={focusable}
                aria-label={`Track of line ${t.line}${t.metres ? `, ${t.metres[0]}–${t.metres[1]} m` : ""}`}
                aria-pressed={selected}
                data-track={t.line}
                points={pts(t.points)}
                fill="none"
                stroke={selected ? BRASS : "transparent"}
                strokeOpacity={selected ? 0.5 : 1}
                strokeWidth={18}
                strokeLinecap="round"
                strokeLinejoin="round"
                className={readOnly ? "" : "cursor-pointer"}
                onPointerDown={(e) => h.onTrackPointerDown(trackIndex, e)}
                onDoubleClick={(e) => h.onTrackDoubleClick(trackIndex, e)}
                onFocus={() => h.onFocusSelect({ type: "track", track: trackIndex })}
                onKeyDown={h.onKey}
              />
            ) : (
              <text x={t.points[0][0]} y={t.points[0][1] - 12} fill={INK_FAINT} fontSize={11} aria-hidden="true" pointerEvents="none">
                {`${t.line} (drawn automatically)`}
              </text>
            )}
            {selected && !readOnly
              ? t.points.map((v, j) => (
                  <rect
                    key={j}
                    role="button"
                    tabIndex={0}
                    aria-label={`Bend ${j + 1} of line ${t.line} at ${Math.round(v[0])}, ${Math.round(v[1])}`}
                    aria-pressed={selection?.type === "vertex" && selection.vertex === j}
                    data-vertex={`${t.line}:${j}`}
                    x={v[0] - 6}
                    y={v[1] - 6}
                    width={12}
                    height={12}
                    fill={selection?.type === "vertex" && selection.vertex === j ? BRASS : "#111821"}
                    stroke={BRASS}
                    strokeWidth={2}
                    className="cursor-move"
                    onPointerDown={(e) => h.onVertexPointerDown(trackIndex, j, e)}
                    onFocus={() => h.onFocusSelect({ type: "vertex", track: trackIndex, vertex: j })}
                    onKeyDown={h.onKey}
                  />
                ))
              : null}
          </g>
        );
      })}
      {doc.points.map((p) =>
        item("points", p.id, p.name, p.line, p.at, geometry.points[p.id], <rect x={-6} y={-6} width={12} height={12} transform="rotate(45)" fill="#1c2835" stroke={INK_FAINT} strokeWidth={1.5} />),
      )}
      {doc.detectors.map((d) =>
        item("detectors", d.id, d.name, d.line, d.at, geometry.detectors[d.id], <rect x={-3} y={-10} width={6} height={20} rx={1.5} fill="#c9d3dd" stroke="#0b1016" strokeWidth={1} />),
      )}
      {doc.signals.map((s) =>
        item("signals", s.id, s.name, s.line, s.at, geometry.signals[s.id], <circle r={11} fill={DANGER} stroke="#0b1016" strokeWidth={2} />, geometry.signalTrack[s.id]),
      )}
    </>
  );
}

function trackIndexOf(doc: DrawingDoc, t: { line: string; points: Pt[] }): number {
  return doc.schematic.tracks.findIndex((x) => x.line === t.line && x.points.length === t.points.length && x.points.every((p, i) => Math.abs(p[0] - t.points[i][0]) < 0.01 && Math.abs(p[1] - t.points[i][1]) < 0.01));
}
