/**
 * The running-day report's charts as uPlot options and data (pure, no DOM): an aspect
 * timeline per signal with its trains, the waits at each signal as a histogram, and the
 * pulses each train gave at each detector with mismatches in their own colour.
 */
import type uPlot from "uplot";
import type { SessionReportDto, SignalTimelineDto } from "@shared/contract/report";
import type { ShownAspect } from "@shared/rulebook/schema";

/** Colours of the control-room theme (tailwind.config.ts). */
export const CHART_COLOURS = {
  danger: "#ef3b34",
  caution: "#f5b82e",
  clear: "#2fcf6a",
  dark: "#55606b",
  ink: "#b5c2cf",
  grid: "#283746",
  brass: "#d9b35f",
  train: "#7fb3ff",
} as const;

const LEVEL: Record<ShownAspect, number> = { dark: -1, danger: 0, caution: 1, clear: 2 };
const LEVEL_NAMES: Record<number, string> = { [-1]: "dark", 0: "danger", 1: "caution", 2: "clear" };
/** Height of the trains' marks above the aspect line, on the level scale. */
const TRAIN_MARK_LEVEL = 2.6;
const CHECK_MARK_LEVEL = -0.5;
/** Width of one bin of the waits histogram. */
export const WAIT_BIN_S = 10;

const toS = (iso: string) => Date.parse(iso) / 1000;

const axis = (extra: Partial<uPlot.Axis> = {}): uPlot.Axis => ({
  stroke: CHART_COLOURS.ink,
  grid: { stroke: CHART_COLOURS.grid, width: 1 },
  ticks: { stroke: CHART_COLOURS.grid, width: 1 },
  ...extra,
});

/**
 * One signal's aspects through the day (a stepped line: danger 0, caution 1, clear 2), with
 * a mark where each of its trains reached the signal and where it passed it, and the
 * priority checks (for the priority route's signal).
 */
export function aspectTimeline(
  report: SessionReportDto,
  signal: SignalTimelineDto,
  stepped: uPlot.Series.PathBuilder,
): { options: Omit<uPlot.Options, "width">; data: uPlot.AlignedData } {
  const routes = new Set(report.routes.filter((r) => r.signal === signal.id).map((r) => r.id));
  const trains = report.trains.filter((t) => routes.has(t.route));
  const checks = report.checks.filter((c) => c.signal === signal.id);
  const marks = new Map<number, { arrive?: boolean; enter?: boolean; check?: boolean }>();
  const mark = (iso: string | null, key: "arrive" | "enter" | "check") => {
    if (!iso) return;
    const s = toS(iso);
    marks.set(s, { ...marks.get(s), [key]: true });
  };
  trains.forEach((t) => {
    mark(t.atSignalAt, "arrive");
    mark(t.enteredAt, "enter");
  });
  checks.forEach((c) => mark(c.from, "check"));
  const changes = signal.changes.map((c) => ({ s: toS(c.at), level: LEVEL[c.aspect] }));
  const xs = [...new Set([toS(report.from), toS(report.until), ...changes.map((c) => c.s), ...marks.keys()])].sort((a, b) => a - b);
  const levels: (number | null)[] = [];
  let c = 0;
  let level = changes[0]?.level ?? 0;
  for (const x of xs) {
    while (c < changes.length && changes[c].s <= x) level = changes[c++].level;
    levels.push(level);
  }
  const at = (key: "arrive" | "enter" | "check", y: number) => xs.map((x) => (marks.get(x)?.[key] ? y : null));
  const pointsOnly = (colour: string, size: number): Partial<uPlot.Series> => ({
    stroke: colour,
    fill: colour,
    paths: () => null,
    points: { show: true, size, stroke: colour, fill: colour },
  });
  return {
    options: {
      height: 150,
      legend: { show: true },
      cursor: { drag: { x: true, y: false } },
      scales: { x: { time: true }, y: { range: [-0.8, 2.9] } },
      axes: [
        axis(),
        axis({ splits: () => [0, 1, 2], values: (_u, splits) => splits.map((v) => LEVEL_NAMES[v] ?? ""), size: 70 }),
      ],
      series: [
        {},
        { label: `${signal.id} shown`, stroke: CHART_COLOURS.brass, width: 2, paths: stepped, points: { show: false }, value: (_u, v) => (v === null ? "—" : (LEVEL_NAMES[v] ?? "")) },
        { label: "train at signal", ...pointsOnly(CHART_COLOURS.train, 9), value: (_u, v) => (v === null ? "" : "▲") },
        { label: "train passed", ...pointsOnly(CHART_COLOURS.clear, 7), value: (_u, v) => (v === null ? "" : "●") },
        { label: "priority check", ...pointsOnly(CHART_COLOURS.danger, 11), value: (_u, v) => (v === null ? "" : "!") },
      ],
    },
    data: [xs, levels, at("arrive", TRAIN_MARK_LEVEL), at("enter", TRAIN_MARK_LEVEL - 0.2), at("check", CHECK_MARK_LEVEL)],
  };
}

/** Counts of waits per WAIT_BIN_S-wide bin, one series per route. */
export function waitsHistogram(report: SessionReportDto, bars: uPlot.Series.PathBuilder): { options: Omit<uPlot.Options, "width">; data: uPlot.AlignedData } {
  const longest = Math.max(0, ...report.routes.flatMap((r) => r.waitsS));
  const bins = Math.max(1, Math.ceil((longest + 0.001) / WAIT_BIN_S));
  const xs = Array.from({ length: bins }, (_, i) => i * WAIT_BIN_S);
  const palette = [CHART_COLOURS.brass, CHART_COLOURS.train, CHART_COLOURS.caution, CHART_COLOURS.clear];
  const series = report.routes.map((r, i): uPlot.Series => ({
    label: `${r.id} (${r.signal})`,
    stroke: palette[i % palette.length],
    fill: `${palette[i % palette.length]}99`,
    paths: bars,
    points: { show: false },
  }));
  const counts = report.routes.map((r) => xs.map((x) => r.waitsS.filter((w) => w >= x && w < x + WAIT_BIN_S).length));
  return {
    options: {
      height: 180,
      scales: { x: { time: false, range: [-WAIT_BIN_S / 2, bins * WAIT_BIN_S - WAIT_BIN_S / 2] }, y: { range: (_u, _min, max) => [0, Math.max(1, max) + 0.5] } },
      axes: [axis({ values: (_u, splits) => splits.map((s) => `${s}–${s + WAIT_BIN_S} s`), size: 40 }), axis({ label: "trains", size: 50 })],
      series: [{ label: "wait" }, ...series],
    },
    data: [xs, ...counts],
  };
}

/**
 * Pulses per train per detector: each train takes a slot of width 1 on the x axis, its
 * detectors (in path order) bars within it; a count that differs from the train's axles at
 * its first approach detector is drawn in the danger colour.
 */
export function pulsesPerTrain(report: SessionReportDto, bars: uPlot.Series.PathBuilder): { options: Omit<uPlot.Options, "width">; data: uPlot.AlignedData; slots: { x: number; train: number; detector: string }[] } {
  const slots: { x: number; train: number; detector: string; count: number; bad: boolean }[] = [];
  for (const t of report.trains) {
    const detectors = Object.keys(t.counts);
    detectors.forEach((d, i) => {
      slots.push({ x: t.n - 0.4 + (0.8 * (i + 0.5)) / detectors.length, train: t.n, detector: d, count: t.counts[d], bad: t.mismatches.includes(d) });
    });
  }
  const xs = slots.map((s) => s.x);
  return {
    options: {
      height: 180,
      scales: { x: { time: false, range: [0.4, Math.max(1, report.trains.length) + 0.6] }, y: { range: (_u, _min, max) => [0, Math.max(2, max) + 0.5] } },
      axes: [axis({ label: "train", splits: () => report.trains.map((t) => t.n), values: (_u, splits) => splits.map((s) => `#${s}`), size: 50 }), axis({ label: "pulses", size: 50 })],
      series: [
        { label: "slot", value: (_u, v) => (v === null ? "" : (slots.find((s) => s.x === v)?.detector ?? "")) },
        { label: "pulses as counted", stroke: CHART_COLOURS.train, fill: `${CHART_COLOURS.train}aa`, paths: bars, points: { show: false } },
        { label: "axle-count mismatch", stroke: CHART_COLOURS.danger, fill: CHART_COLOURS.danger, paths: bars, points: { show: false } },
      ],
    },
    data: [xs, slots.map((s) => (s.bad ? null : s.count)), slots.map((s) => (s.bad ? s.count : null))],
    slots,
  };
}
