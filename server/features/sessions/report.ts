/**
 * The running-day report (CONTRACT.md §6 `GET /api/sessions/:id/report`) as a pure function:
 * the session's engine inputs are stepped through the same engine the runner uses, while a
 * {@link TrainTracker} follows the trains on the rulebook's proving routes. No I/O, no clock:
 * `reportService.ts` reads the session and calls {@link buildReport}.
 *
 * How the figures are judged (README "The running-day report" says the same in words):
 * - a train **waits** at its signal from its leading axle crossing the route's last approach
 *   detector until it crosses entry; its wait is the part of that time the signal showed
 *   danger (a train that found the signal off has no wait);
 * - a **priority check** is a stretch of time in which a train of the priority route waits
 *   at its signal, the signal shows danger, no train occupies any route's section and every
 *   signal of a route conflicting with the priority route shows danger: the junction was
 *   free, yet the priority train was stopped (PRODUCT.md: never stopped on the bank);
 * - a board is **offline** from a status `online:false` (or the session's start, when its
 *   last status before the session was offline or it had none) until `online:true`.
 */
import type { EngineInput, EngineState } from "@shared/rulebook/engine";
import { shownAspects, step } from "@shared/rulebook/engine";
import type { Rulebook, ShownAspect } from "@shared/rulebook/schema";
import type {
  DetectorReportDto,
  NodeReportDto,
  PriorityCheckDto,
  ReportAlarmDto,
  RouteReportDto,
  SessionReportDto,
  SignalTimelineDto,
  TrainReportDto,
} from "@shared/contract/report";
import { AXLE_GAP_MS, TrainTracker, type TrackedTrain } from "./trainTracker";

export interface ReportInputs {
  sessionId: number;
  layout: { slug: string; name: string };
  rulebookVersion: number | null;
  rulebook: Rulebook;
  /** Engine state just before the session's first input. */
  start: EngineState;
  /** Accepted inputs in the order the runner applied them, with their event ids. */
  inputs: { input: EngineInput; eventId: string | null }[];
  /** Session start and end (ms); `until` is now for an open session. */
  from: number;
  until: number;
  open: boolean;
  importedFrom: string | null;
  detectors: { id: string; name: string }[];
  signals: { id: string; name: string }[];
  nodes: { id: string; name: string }[];
  /** Whether each board was online when the session opened (absent = offline). */
  onlineAtStart: Record<string, boolean>;
  /** Accepted status messages during the session, in order. */
  statuses: { node: string; at: number; online: boolean }[];
  /** Pulses the runner did not apply, per detector. */
  notApplied: Record<string, { rejected: number; duplicate: number }>;
  alarms: ReportAlarmDto[];
  axleGapMs?: number;
}

const iso = (ms: number) => new Date(ms).toISOString();
const seconds = (ms: number) => Math.round(ms) / 1000;

/** Median of a list (the mean of the middle two for an even length). */
export function median(values: number[]): number | null {
  if (values.length === 0) return null;
  const sorted = [...values].sort((a, b) => a - b);
  const mid = sorted.length >> 1;
  return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}

interface OpenCheck {
  train: TrackedTrain;
  from: number;
  inputIndex: number;
  eventId: string | null;
  state: EngineState;
}

export function buildReport(data: ReportInputs): SessionReportDto {
  const { rulebook } = data;
  const routes = rulebook.proving?.routes ?? [];
  const priority = routes.find((r) => r.id === rulebook.proving?.priority) ?? null;
  const conflicting = new Set<string>();
  for (const [a, b] of rulebook.proving?.conflicts ?? []) {
    if (priority && a === priority.id) conflicting.add(b);
    if (priority && b === priority.id) conflicting.add(a);
  }
  const conflictSignals = routes.filter((r) => conflicting.has(r.id) && r.signal !== priority?.signal).map((r) => r.signal);
  const tracker = new TrainTracker(routes, data.axleGapMs ?? AXLE_GAP_MS);

  let state = data.start;
  let shown: Record<string, ShownAspect> = shownAspects(rulebook, state);
  const timelines = new Map<string, { at: number; aspect: ShownAspect }[]>();
  for (const s of data.signals) timelines.set(s.id, [{ at: data.from, aspect: shown[s.id] ?? "danger" }]);
  let clock = data.from;
  const checks: PriorityCheckDto[] = [];
  let openCheck: OpenCheck | null = null;

  const closeCheck = (at: number) => {
    if (!openCheck || !priority) return;
    const s = openCheck.state;
    checks.push({
      route: priority.id,
      signal: priority.signal,
      train: openCheck.train.n,
      from: iso(openCheck.from),
      until: iso(at),
      seconds: seconds(at - openCheck.from),
      inputIndex: openCheck.inputIndex,
      eventId: openCheck.eventId,
      held: s.held.includes(priority.signal),
      faulted: s.faulted !== null,
      counters: { ...s.counters },
      latches: { ...s.latches },
      selectors: { ...s.selectors },
    });
    openCheck = null;
  };

  /** The time from `clock` to `to` passes with `shown` as it is. */
  const elapse = (to: number) => {
    if (to <= clock) return;
    for (const t of tracker.active()) {
      if (TrainTracker.waiting(t) && shown[t.routes[0].signal] === "danger") t.dangerMs += to - clock;
    }
    clock = to;
  };

  const judge = (at: number, inputIndex: number, eventId: string | null) => {
    if (!priority) return;
    const junctionFree = !tracker.active().some((t) => tracker.occupies(t)) && conflictSignals.every((s) => shown[s] === "danger");
    const waitingTrain =
      shown[priority.signal] === "danger" ? tracker.active().find((t) => t.routes[0].id === priority.id && TrainTracker.waiting(t)) : undefined;
    const checked = junctionFree && waitingTrain !== undefined;
    if (openCheck && (!checked || openCheck.train !== waitingTrain)) closeCheck(at);
    if (checked && !openCheck) openCheck = { train: waitingTrain!, from: at, inputIndex, eventId, state };
  };

  judge(data.from, -1, null);
  data.inputs.forEach(({ input, eventId }, index) => {
    const at = Math.max(input.at, clock);
    elapse(at);
    if (input.type === "pulse") tracker.pulse(input.detector, at);
    else tracker.advance(at);
    state = step(rulebook, state, input).state;
    const next = shownAspects(rulebook, state);
    for (const [signal, aspect] of Object.entries(next)) {
      if (shown[signal] !== aspect) timelines.get(signal)?.push({ at, aspect });
    }
    shown = next;
    judge(at, index, eventId);
  });
  const end = Math.max(data.until, clock);
  elapse(end);
  tracker.advance(end);
  closeCheck(end);

  return {
    sessionId: data.sessionId,
    layout: data.layout,
    rulebookVersion: data.rulebookVersion,
    from: iso(data.from),
    until: iso(end),
    open: data.open,
    importedFrom: data.importedFrom,
    inputs: data.inputs.length,
    priorityRoute: priority?.id ?? null,
    routes: routeFigures(routes, tracker),
    trains: tracker.trains.map((t) => trainFigures(t, tracker)),
    checks,
    detectors: detectorFigures(data, tracker),
    nodes: nodeFigures(data, end),
    signals: data.signals.map((s): SignalTimelineDto => ({ id: s.id, name: s.name, changes: timelines.get(s.id)!.map((c) => ({ at: iso(c.at), aspect: c.aspect })) })),
    alarms: data.alarms,
  };
}

/** Detectors of its path where a cleared train's count differs from its axles (a train still on the layout is not judged). */
function mismatches(t: TrackedTrain, tracker: TrainTracker): string[] {
  if (t.clearedAt === null) return [];
  const axles = tracker.axles(t);
  return tracker.path(t.routes[0]).filter((d) => (t.counts[d] ?? 0) !== axles);
}

function trainFigures(t: TrackedTrain, tracker: TrainTracker): TrainReportDto {
  const path = tracker.path(t.routes[0]);
  const counts: Record<string, number> = {};
  for (const d of path) if (d in t.counts || t.clearedAt !== null) counts[d] = t.counts[d] ?? 0;
  return {
    n: t.n,
    route: t.routes[0].id,
    axles: tracker.axles(t),
    arrivedAt: iso(t.arrivedAt),
    atSignalAt: t.atSignalAt === null ? null : iso(t.atSignalAt),
    enteredAt: t.enteredAt === null ? null : iso(t.enteredAt),
    clearedAt: t.clearedAt === null ? null : iso(t.clearedAt),
    waitedS: seconds(t.dangerMs),
    counts,
    mismatches: mismatches(t, tracker),
  };
}

function routeFigures(routes: { id: string; signal: string }[], tracker: TrainTracker): RouteReportDto[] {
  return routes.map((r) => {
    const trains = tracker.trains.filter((t) => t.routes[0].id === r.id);
    const waitsS = trains.filter((t) => t.dangerMs > 0).map((t) => seconds(t.dangerMs));
    return {
      id: r.id,
      signal: r.signal,
      trains: trains.length,
      waits: { count: waitsS.length, medianS: median(waitsS), maxS: waitsS.length ? Math.max(...waitsS) : null },
      waitsS,
    };
  });
}

function detectorFigures(data: ReportInputs, tracker: TrainTracker): DetectorReportDto[] {
  const pulses: Record<string, number> = {};
  for (const { input } of data.inputs) if (input.type === "pulse") pulses[input.detector] = (pulses[input.detector] ?? 0) + 1;
  const judged = tracker.trains.map((t) => ({ t, bad: new Set(mismatches(t, tracker)) }));
  return data.detectors.map((d) => ({
    id: d.id,
    name: d.name,
    pulses: pulses[d.id] ?? 0,
    rejected: data.notApplied[d.id]?.rejected ?? 0,
    duplicate: data.notApplied[d.id]?.duplicate ?? 0,
    trains: tracker.trains.filter((t) => (t.counts[d.id] ?? 0) > 0).length,
    mismatches: judged.filter(({ bad }) => bad.has(d.id)).length,
    stray: tracker.stray[d.id] ?? 0,
  }));
}

function nodeFigures(data: ReportInputs, end: number): NodeReportDto[] {
  const span = Math.max(1, end - data.from);
  return data.nodes.map((n) => {
    let online = data.onlineAtStart[n.id] ?? false;
    let everOnline = online;
    let downSince: number | null = online ? null : data.from;
    const offline: { from: string; until: string }[] = [];
    let offlineMs = 0;
    const up = (at: number) => {
      if (downSince === null) return;
      if (at > downSince) {
        offline.push({ from: iso(downSince), until: iso(at) });
        offlineMs += at - downSince;
      }
      downSince = null;
    };
    for (const s of data.statuses) {
      if (s.node !== n.id || s.online === online) continue;
      const at = Math.min(Math.max(s.at, data.from), end);
      online = s.online;
      if (online) {
        everOnline = true;
        up(at);
      } else downSince = at;
    }
    up(end);
    return { id: n.id, name: n.name, offlineS: seconds(offlineMs), uptime: Math.round((1 - offlineMs / span) * 1000) / 1000, offline, neverConnected: !everOnline };
  });
}

