import { memo, useEffect, useMemo, useRef, useState } from "react";
import type { LayoutDetector, LayoutSignal } from "@shared/layout/schema";
import type { ShownAspect } from "@shared/rulebook/schema";
import { aspectWordDy, labelKey, layoutGeometry, pathBetween, type MimicLayout, type Pt } from "./geometry";
import { deriveOccupancy, type RouteShape } from "./occupancy";

export type { MimicLayout } from "./geometry";

export interface MimicState {
  shown: Record<string, ShownAspect | undefined>;
  counters?: Record<string, number>;
  selectors?: Record<string, string>;
  held?: string[];
  /** Where each points lie as last reported (absent: not yet reported). */
  points?: Record<string, "normal" | "reverse" | "moving" | undefined>;
}

/** Points are drawn by the word for where they lie (N, R, moving), never by colour alone. */
const POINTS_MARK = { normal: "N", reverse: "R", moving: "…" } as const;
const POINTS_FILL = { normal: "#1c2835", reverse: "#1c2835", moving: "#4a3b12", unknown: "#11161d" } as const;

export interface MimicProps {
  layout: MimicLayout;
  state: MimicState;
  /** The rulebook's proving routes: used to shade set and occupied sections (see occupancy.ts). */
  routes?: RouteShape[];
  /** Pulses seen per detector; a detector flashes whenever its count goes up. */
  pulses?: Record<string, number>;
  /** A detector to mark steadily as the latest pulsed one (the simulator's current step). */
  lastPulsed?: string;
  /** Trains placed at the detector their leading axle crossed last (counterexample playback). */
  trains?: { train: number; route: string; detector: string | null }[];
  /** Heading for screen readers, e.g. the layout's name. */
  title: string;
  /** `display`: thicker strokes and larger words for the screen across the room. */
  size?: "panel" | "display";
  className?: string;
}

/** "Signal M1, Main home: clear" — the accessible name CONTRACT.md §7 promises. */
export function signalLabel(signal: Pick<LayoutSignal, "id" | "name">, aspect: ShownAspect): string {
  return `Signal ${signal.id}, ${signal.name}: ${aspect}`;
}

const ASPECT_FILL: Record<ShownAspect, string> = {
  danger: "#ef3b34",
  caution: "#f5b82e",
  clear: "#2fcf6a",
  dark: "#55606b",
};
const TRACK = "#3a4b5c";
const INK = "#e4ebf2";
const INK_FAINT = "#7f8fa0";
const BRASS = "#d9b35f";
const SET_ROUTE = "#9fc3e6";
const PULSE = "#7fe3ff";

const NO_PULSES: Record<string, number> = {};

const toPoints = (pts: Pt[]) => pts.map((p) => `${p[0].toFixed(1)},${p[1].toFixed(1)}`).join(" ");

/** How long a detector stays lit after a pulse. */
export const PULSE_FLASH_MS = 500;

// The only animation is on held signals (rare). Pulse flashes are static highlights switched
// off by one timer: a CSS animation per pulse keeps the whole SVG repainting every frame,
// which a clubroom PC cannot afford at 200 pulses a second.
const MIMIC_CSS = `
@keyframes blocklight-held { 0%, 100% { opacity: 1; } 50% { opacity: 0.35; } }
.bl-held { animation: blocklight-held 1.6s ease-in-out infinite; }
@media (prefers-reduced-motion: reduce) { .bl-held { animation: none; } }
`;

/** Detectors pulsed within the last PULSE_FLASH_MS, from their pulse counts. */
function useLitDetectors(pulses: Record<string, number>): Set<string> {
  const seen = useRef<Record<string, number>>({});
  const litUntil = useRef<Record<string, number>>({});
  const [, setTick] = useState(0);
  const now = Date.now();
  for (const [d, n] of Object.entries(pulses)) {
    if (seen.current[d] !== n) {
      seen.current[d] = n;
      litUntil.current[d] = now + PULSE_FLASH_MS;
    }
  }
  const lit = new Set<string>();
  let next = Infinity;
  for (const [d, until] of Object.entries(litUntil.current)) {
    if (until > now) {
      lit.add(d);
      next = Math.min(next, until);
    } else delete litUntil.current[d];
  }
  const litKey = [...lit].sort().join(",");
  useEffect(() => {
    if (next === Infinity) return;
    const timer = setTimeout(() => setTick((t) => t + 1), Math.max(16, next - Date.now()));
    return () => clearTimeout(timer);
  }, [litKey, next]);
  return lit;
}

/**
 * The drawn mimic: tracks, points, detectors and signals of a layout with each signal's
 * shown aspect, detector pulses, set/occupied sections and trains waiting at signals.
 * Read-only (no controls), so the visitor display uses it as it is.
 */
export function Mimic({ layout, state, routes, pulses = NO_PULSES, lastPulsed, trains, title, size = "panel", className = "" }: MimicProps) {
  const geometry = useMemo(() => layoutGeometry(layout), [layout]);
  const lit = useLitDetectors(pulses);
  const held = useMemo(() => new Set(state.held ?? []), [state.held]);
  const occupancy = useMemo(
    () => deriveOccupancy(routes, { counters: state.counters ?? {}, selectors: state.selectors ?? {}, shown: state.shown }),
    [routes, state.counters, state.selectors, state.shown],
  );
  const routePaths = useMemo(() => {
    const out: Record<string, Pt[]> = {};
    for (const r of routes ?? []) {
      const path = [r.entry, ...r.exit];
      const pts: Pt[] = [];
      for (let i = 1; i < path.length; i++) pts.push(...pathBetween(geometry, layout, path[i - 1], path[i]));
      out[r.id] = pts;
    }
    return out;
  }, [routes, geometry, layout]);

  const waiting = new Set(occupancy.waiting);
  const scale = size === "display" ? 1.25 : 1;
  const vb = geometry.viewBox;

  return (
    <svg
      role="group"
      aria-label={`Mimic of ${title}`}
      viewBox={`${vb.x} ${vb.y} ${vb.width} ${vb.height}`}
      className={`block h-auto w-full select-none rounded-lg bg-panel-950 ${className}`}
      preserveAspectRatio="xMidYMid meet"
      fontFamily='"JetBrains Mono", ui-monospace, monospace'
    >
      <style>{MIMIC_CSS}</style>
      {/* Plain tracks */}
      <g aria-hidden="true">
        {geometry.tracks.map((t, i) => (
          <polyline key={`${t.line}-${i}`} points={toPoints(t.points)} fill="none" stroke={TRACK} strokeWidth={7 * scale} strokeLinecap="round" strokeLinejoin="round" />
        ))}
      </g>
      {/* Set and occupied sections over the tracks */}
      <g aria-hidden="true">
        {occupancy.routes.map(({ route, set, occupied }) => {
          const pts = routePaths[route.id];
          if (!pts || pts.length < 2 || (!set && !occupied)) return null;
          return (
            <polyline
              key={route.id}
              data-route={route.id}
              data-route-state={occupied ? "occupied" : "set"}
              points={toPoints(pts)}
              fill="none"
              stroke={occupied ? BRASS : SET_ROUTE}
              strokeWidth={(occupied ? 7 : 3) * scale}
              strokeDasharray={occupied ? undefined : `${10 * scale} ${6 * scale}`}
              strokeLinecap="round"
              strokeLinejoin="round"
              opacity={occupied ? 0.95 : 0.85}
            />
          );
        })}
      </g>
      <g aria-hidden="true">
        {geometry.labels.map((l, i) => (
          <text key={i} x={l.at[0]} y={l.at[1]} fill={INK_FAINT} fontSize={12 * scale}>
            {l.text}
          </text>
        ))}
      </g>
      <g>
        {layout.points.map((p) => {
          const at = geometry.points[p.id];
          if (!at) return null;
          const lies = state.points?.[p.id] ?? "unknown";
          const label = geometry.labelOffsets[labelKey("points", p.id)] ?? [0, -12];
          return (
            <g key={p.id} transform={`translate(${at[0]} ${at[1]})`} data-points={p.id} data-lies={lies} role="img" aria-label={`Points ${p.id}, ${p.name}: ${lies === "unknown" ? "not reported" : lies}`}>
              <rect x={-5} y={-5} width={10} height={10} transform="rotate(45)" fill={POINTS_FILL[lies]} stroke={INK_FAINT} strokeWidth={1.5} />
              <text x={label[0] * scale} y={label[1] * scale} textAnchor="middle" fill={INK_FAINT} fontSize={11 * scale}>
                {p.id}
                {lies === "unknown" ? "" : ` ${POINTS_MARK[lies]}`}
              </text>
            </g>
          );
        })}
      </g>
      <g>
        {layout.detectors.map((d) => {
          const at = geometry.detectors[d.id];
          return at ? <DetectorMark key={d.id} detector={d} at={at} label={geometry.labelOffsets[labelKey("detectors", d.id)] ?? [0, 24]} pulses={pulses[d.id] ?? 0} lit={lit.has(d.id)} latest={lastPulsed === d.id} scale={scale} /> : null;
        })}
      </g>
      {trains?.length ? <TrainMarkers trains={trains} detectors={geometry.detectors} scale={scale} /> : null}
      <g>
        {layout.signals.map((s) => {
          const at = geometry.signals[s.id];
          const post = geometry.signalTrack[s.id] ?? at;
          return at ? (
            <SignalMark key={s.id} signal={s} at={at} post={post} label={geometry.labelOffsets[labelKey("signals", s.id)] ?? [17, 5]} aspect={state.shown[s.id] ?? "dark"} held={held.has(s.id)} waiting={waiting.has(s.id)} scale={scale} />
          ) : null;
        })}
      </g>
    </svg>
  );
}

interface DetectorMarkProps {
  detector: LayoutDetector;
  at: Pt;
  /** Where the id is written, relative to the detector. */
  label: Pt;
  pulses: number;
  lit: boolean;
  latest: boolean;
  scale: number;
}

const DetectorMark = memo(function DetectorMark({ detector, at, label, pulses, lit, latest, scale }: DetectorMarkProps) {
  return (
    <g
      role="img"
      aria-label={`Detector ${detector.id}, ${detector.name}${latest ? ": pulsed" : ""}`}
      data-detector={detector.id}
      data-pulses={pulses}
      data-pulsed={latest ? "true" : undefined}
      data-lit={lit ? "true" : undefined}
      transform={`translate(${at[0]} ${at[1]})`}
    >
      <title>{`${detector.name} at ${detector.at} m`}</title>
      {latest ? <circle r={13 * scale} fill="none" stroke={PULSE} strokeWidth={2.5} /> : null}
      {lit ? <circle r={14 * scale} fill={PULSE} fillOpacity={0.18} stroke={PULSE} strokeWidth={3} /> : null}
      <rect x={-2.5 * scale} y={-9 * scale} width={5 * scale} height={18 * scale} rx={1.5} fill={lit ? PULSE : "#c9d3dd"} stroke="#0b1016" strokeWidth={1} />
      <text x={label[0] * scale} y={label[1] * scale} textAnchor="middle" fill={INK} fontSize={12 * scale} fontWeight={700} aria-hidden="true">
        {detector.id}
      </text>
    </g>
  );
});

interface SignalMarkProps {
  signal: LayoutSignal;
  at: Pt;
  post: Pt;
  /** Where the id is written, relative to the lamp. */
  label: Pt;
  aspect: ShownAspect;
  held: boolean;
  waiting: boolean;
  scale: number;
}

const SignalMark = memo(function SignalMark({ signal, at, post, label, aspect, held, waiting, scale }: SignalMarkProps) {
  const r = 11 * scale;
  const wordY = aspectWordDy(at, post, scale);
  return (
    <g role="img" aria-label={signalLabel(signal, aspect)} data-signal={signal.id} data-aspect={aspect} data-held={held ? "true" : undefined} data-waiting={waiting ? "true" : undefined}>
      <title>{`${signal.name} at ${signal.at} m`}</title>
      <line x1={post[0]} y1={post[1]} x2={at[0]} y2={at[1]} stroke={INK_FAINT} strokeWidth={2} />
      <g transform={`translate(${at[0]} ${at[1]})`}>
        {aspect !== "dark" ? <circle r={r + 6 * scale} fill={ASPECT_FILL[aspect]} opacity={0.22} /> : null}
        <circle r={r} fill={aspect === "dark" ? "#0b1016" : ASPECT_FILL[aspect]} stroke={aspect === "dark" ? ASPECT_FILL.dark : "#0b1016"} strokeWidth={aspect === "dark" ? 3 : 2} />
        {held ? <circle className="bl-held" r={r + 5 * scale} fill="none" stroke={INK} strokeWidth={2.5} strokeDasharray="4 3" /> : null}
        <text x={label[0] * scale} y={label[1] * scale} fill={INK} fontSize={15 * scale} fontWeight={700} aria-hidden="true">
          {signal.id}
        </text>
        <text y={wordY} textAnchor="middle" fill={aspect === "dark" ? INK_FAINT : ASPECT_FILL[aspect]} fontSize={11 * scale} fontWeight={700} letterSpacing={1} aria-hidden="true">
          {held ? `HELD · ${aspect.toUpperCase()}` : aspect.toUpperCase()}
        </text>
      </g>
      {waiting ? <WaitingTrain post={post} scale={scale} /> : null}
    </g>
  );
});

/**
 * Numbered trains of a counterexample replay, stacked above the detector each one's leading
 * axle crossed last, so the engineer sees where every train was when the property broke.
 */
function TrainMarkers({ trains, detectors, scale }: { trains: NonNullable<MimicProps["trains"]>; detectors: Record<string, Pt>; scale: number }) {
  const stacked = new Map<string, number>();
  return (
    <g>
      {trains.map((t) => {
        const at = t.detector ? detectors[t.detector] : undefined;
        if (!at) return null;
        const level = stacked.get(t.detector!) ?? 0;
        stacked.set(t.detector!, level + 1);
        const w = 34 * scale;
        const h = 16 * scale;
        const x = at[0] - w / 2;
        const y = at[1] - 34 * scale - level * (h + 4 * scale);
        return (
          <g key={t.train} role="img" aria-label={`Train ${t.train} on route ${t.route} at ${t.detector}`} data-train={t.train}>
            <rect x={x} y={y} width={w} height={h} rx={3} fill={BRASS} stroke="#0b1016" strokeWidth={1.5} />
            <text x={at[0]} y={y + h - 4 * scale} textAnchor="middle" fill="#0b1016" fontSize={11 * scale} fontWeight={700} aria-hidden="true">
              {`T${t.train}`}
            </text>
          </g>
        );
      })}
    </g>
  );
}

/** A train standing on the track just before the signal (the rulebook counts it on the approach). */
function WaitingTrain({ post, scale }: { post: Pt; scale: number }) {
  const w = 30 * scale;
  const h = 12 * scale;
  const x = post[0] - w - 12 * scale;
  const y = post[1] - h / 2;
  return (
    <g data-train-waiting="true" aria-hidden="true">
      <title>A train is waiting at this signal</title>
      <rect x={x} y={y} width={w} height={h} rx={3} fill={BRASS} stroke="#0b1016" strokeWidth={1.5} />
      <path d={`M ${x + w} ${y} l ${8 * scale} ${h / 2} l ${-8 * scale} ${h / 2} z`} fill={BRASS} stroke="#0b1016" strokeWidth={1.5} />
    </g>
  );
}
