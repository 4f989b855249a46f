/**
 * The fake layout's playing core: moves the trains of a scenario along their routes and says
 * which board reports which pulse, and when. No MQTT and no real time here: messages go out
 * through `send`, aspects come in through `onAspect`, time comes from the injected scheduler,
 * so tests can play a whole day in microseconds.
 *
 * Model (documented in the README's fake-layout section):
 * - A route's path is its approach detectors, then entry (at the signal), then its exit
 *   detectors. Consecutive path detectors on the same line are |Δat| metres apart; on
 *   different lines (a branch joining the main line) CROSS_LINE_GAP_M apart.
 * - A train appears with its leading axle LEAD_IN_M before the first detector and moves at
 *   its own constant speed; axle k is k × axleSpacing behind the leading axle. Each axle
 *   crossing a detector is one pulse, from the board serving that detector.
 * - Trains obey the aspects: while their signal shows danger (or nothing is known yet) the
 *   leading axle stops STOP_SHORT_M before the entry detector; at any other aspect it goes.
 *   A train stops FOLLOW_GAP_M behind the last axle of the train ahead on the same track.
 * - A train given a list of routes takes the first road with none of our trains on it, at
 *   the moment its signal clears for it (as a "first free road" rulebook would choose).
 * - Never more trains on a route at once than the rulebook is proved for (`proving`'s
 *   `maxTrainsPerRoute`; routes sharing signal, approach and entry count together, as in the
 *   prover): a train due while its route is full waits off the layout (in the fiddle yard) and
 *   appears, in turn, when one has left. The scenario check refuses trains longer than `maxAxles`.
 * - One train at a time on an approach: a train stops STOP_SHORT_M before its first detector
 *   while the train ahead has not yet passed its signal with every axle, so the axles of two
 *   trains never run together at a detector (the server's alarm watchers group pulses into trains
 *   by the gaps between them).
 */
import type { AspectPayload, PointsPayload, PointsSetPayload, PulsePayload, ShownPayload } from "@shared/contract/live";
import type { LayoutFile } from "@shared/layout/schema";
import type { Cancel, Scheduler } from "./clock";
import type { Scenario, ScenarioTrain } from "./scenario";

export const CROSS_LINE_GAP_M = 4;
export const LEAD_IN_M = 2;
export const STOP_SHORT_M = 0.3;
export const FOLLOW_GAP_M = 1;
/** How often a train held behind a moving train looks again whether it may move on. */
export const FOLLOW_RECHECK_MS = 250;
export const DEFAULT_LOOP_PAUSE_S = 20;
export const FAKE_FIRMWARE = "fake-layout-1";
/** With no `proving` block in the rulebook: the prover's own default. */
const DEFAULT_MAX_TRAINS_PER_ROUTE = 2;
/** Two detectors closer than this along a path are treated as this far apart. */
const MIN_GAP_M = 0.05;
const EPS_M = 1e-9;
/** A timer that fires this early (rounding) still counts as due. */
const TIMER_SLACK_MS = 1;

export type OutMessage =
  | { kind: "pulse"; node: string; payload: PulsePayload }
  | { kind: "points"; node: string; payload: PointsPayload }
  | { kind: "shown"; node: string; payload: ShownPayload };

export interface BoardState {
  node: string;
  boot: string;
  /** Scenario time at power-up; `t` of a pulse is wall milliseconds since then. */
  bootAt: number;
  seq: number;
  detectors: string[];
  signals: string[];
  /** Points whose position this board reports; it drives those that are power-worked. */
  points: string[];
}

/** How long a fake points motor takes from a `set` to lying in the new position. */
export const POINTS_MOVE_MS = 2_000;

export type TrainEvent =
  | { type: "appears"; train: number; name: string; route: string }
  | { type: "waits"; train: number; name: string; signal: string }
  | { type: "proceeds"; train: number; name: string; signal: string; aspect: string }
  | { type: "takes-road"; train: number; name: string; route: string }
  | { type: "leaves"; train: number; name: string }
  | { type: "day-over"; cycle: number };

export interface PlayerOptions {
  layout: LayoutFile;
  scenario: Scenario;
  scheduler: Scheduler;
  send: (message: OutMessage) => void;
  /** Wall-clock speed-up, used only to turn scenario time into the boards' `t`. */
  speed?: number;
  /** Start the day again once every train has left. */
  loop?: boolean;
  /** A fresh boot id per board (random by default). */
  newBoot?: () => string;
  onEvent?: (event: TrainEvent) => void;
}

interface PathDetector {
  id: string;
  /** Metres from the first detector of the path. */
  pos: number;
  node: string;
}

interface RoutePath {
  id: string;
  signal: string;
  /** Routes with the same group share signal, approach and entry: one queue of trains. */
  group: string;
  /** Index of the entry detector in `detectors`. */
  entryIndex: number;
  detectors: PathDetector[];
  /** Where the route needs points to lie (the rulebook's proving routes). */
  points: Record<string, string>;
}

interface Train {
  no: number;
  name: string;
  /** Candidate paths; the first until a road is chosen. All share approach and entry. */
  candidates: RoutePath[];
  path: RoutePath;
  roadChosen: boolean;
  axles: number;
  spacing: number;
  /** Metres per scenario millisecond. */
  speed: number;
  /** Position of the leading axle on the path, metres. */
  lead: number;
  /** Per axle, the index of the next detector it will cross. */
  next: number[];
  /** The furthest the leading axle may go now (recomputed after every event). */
  limit: number;
  limitedBy: "none" | "signal" | "train";
  waitingReported: boolean;
}

interface Spawn {
  at: number;
  spec: ScenarioTrain;
  index: number;
}

function randomBoot(): string {
  return Math.floor(Math.random() * 0xffffffff)
    .toString(16)
    .padStart(8, "0");
}

/** Builds every route's path with distances, from the layout's detector positions. */
export function routePaths(layout: LayoutFile): Map<string, RoutePath> {
  const detectors = new Map(layout.detectors.map((d) => [d.id, d]));
  const nodeOf = new Map(layout.nodes.flatMap((n) => n.detectors.map((d) => [d, n.id] as const)));
  const paths = new Map<string, RoutePath>();
  for (const route of (layout.rulebook.proving?.routes ?? [])) {
    const ids = [...route.approach, route.entry, ...route.exit];
    const out: PathDetector[] = [];
    ids.forEach((detectorId, i) => {
      const here = detectors.get(detectorId);
      let pos = 0;
      if (i > 0) {
        const before = detectors.get(ids[i - 1]);
        const gap = here && before && here.line === before.line ? Math.abs(here.at - before.at) : CROSS_LINE_GAP_M;
        pos = out[i - 1].pos + Math.max(gap, MIN_GAP_M);
      }
      out.push({ id: detectorId, pos, node: nodeOf.get(detectorId) ?? "" });
    });
    const group = [route.signal, ...route.approach, route.entry].join("|");
    paths.set(route.id, { id: route.id, signal: route.signal, group, entryIndex: route.approach.length, detectors: out, points: { ...(route.points ?? {}) } });
  }
  return paths;
}

export class FakeLayoutPlayer {
  readonly boards: BoardState[];
  private readonly paths: Map<string, RoutePath>;
  private readonly aspects = new Map<string, { aspect: string; rev: number }>();
  private readonly shownRev = new Map<string, number>();
  private trains: Train[] = [];
  private spawns: Spawn[] = [];
  /** Trains due while their route was full, in the order they became due. */
  private held: Spawn[] = [];
  private readonly maxTrainsPerRoute: number;
  private trainCount = 0;
  private cycle = 0;
  private cycleEndsAt: number | null = null;
  private lastTime = 0;
  private cancelTimer: Cancel | null = null;
  private running = false;
  private advancing = false;
  private readonly speed: number;
  /** Where each points of the layout lie (they all lie normal at power-up). */
  private readonly lies = new Map<string, PointsPayload["lies"]>();
  private readonly pointsRev = new Map<string, number>();
  private readonly motors = new Map<string, Cancel>();

  constructor(private readonly options: PlayerOptions) {
    this.speed = options.speed ?? 1;
    this.paths = routePaths(options.layout);
    this.maxTrainsPerRoute = options.layout.rulebook.proving?.maxTrainsPerRoute ?? DEFAULT_MAX_TRAINS_PER_ROUTE;
    const newBoot = options.newBoot ?? randomBoot;
    const now = options.scheduler.now();
    this.boards = options.layout.nodes.map((n) => ({
      node: n.id,
      boot: newBoot(),
      bootAt: now,
      seq: 0,
      detectors: [...n.detectors],
      signals: [...n.signals],
      points: [...(n.points ?? [])],
    }));
    for (const p of options.layout.points) this.lies.set(p.id, "normal");
  }

  /** Powers up the boards and starts the day. Each points board first reports where its points lie. */
  start(): void {
    this.running = true;
    this.lastTime = this.options.scheduler.now();
    for (const board of this.boards) for (const points of board.points) this.reportPoints(board, points);
    this.startCycle(this.lastTime);
    this.run();
  }

  stop(): void {
    this.running = false;
    this.cancelTimer?.();
    this.cancelTimer = null;
  }

  /** The trains on the layout now, for logs and tests. */
  snapshot(): { no: number; name: string; route: string; lead: number; stopped: boolean }[] {
    return this.trains.map((t) => ({ no: t.no, name: t.name, route: t.path.id, lead: t.lead, stopped: t.limit <= t.lead + EPS_M }));
  }

  /**
   * An aspect command reached board `node` (every board subscribes to the layout's signals).
   * Trains see the newest aspect at once; the board serving the signal reports it shown.
   */
  onAspect(node: string, signal: string, payload: AspectPayload): void {
    if (this.advancing) {
      // Called back from inside `send` (a synchronous transport): take it after this step.
      queueMicrotask(() => this.onAspect(node, signal, payload));
      return;
    }
    const known = this.aspects.get(signal);
    if (!known || payload.rev >= known.rev) {
      this.advanceTo(this.options.scheduler.now());
      this.aspects.set(signal, { aspect: payload.aspect, rev: payload.rev });
      if (payload.aspect !== "danger" && known?.aspect !== payload.aspect) this.chooseRoads(signal);
      this.updateLimits();
    }
    const board = this.boards.find((b) => b.node === node);
    const key = `${node}/${signal}`;
    if (board?.signals.includes(signal) && payload.rev >= (this.shownRev.get(key) ?? -1)) {
      this.shownRev.set(key, payload.rev);
      this.options.send({ kind: "shown", node, payload: { signal, aspect: payload.aspect, rev: payload.rev } });
    }
    if (this.running) this.run();
  }

  private aspectOf(signal: string): string {
    return this.aspects.get(signal)?.aspect ?? "dark";
  }

  private startCycle(at: number): void {
    this.cycle++;
    this.cycleEndsAt = null;
    const spawns: Spawn[] = [];
    this.options.scenario.trains.forEach((spec, index) => {
      const count = spec.repeat?.count ?? 1;
      for (let i = 0; i < count; i++) spawns.push({ at: at + (spec.startS + i * (spec.repeat?.everyS ?? 0)) * 1000, spec, index });
    });
    this.spawns = spawns.sort((a, b) => a.at - b.at || a.index - b.index);
  }

  /** Plays every event up to now, then sleeps until the next one. */
  private run(): void {
    this.cancelTimer?.();
    this.cancelTimer = null;
    if (!this.running) return;
    const now = this.options.scheduler.now();
    this.advanceTo(now);
    const next = this.nextEventTime();
    if (next === null) return;
    this.cancelTimer = this.options.scheduler.after(Math.max(0, next - now), () => {
      this.cancelTimer = null;
      this.run();
    });
  }

  /** Processes events in time order up to `now` (plus timer slack). */
  private advanceTo(now: number): void {
    this.advancing = true;
    try {
      this.advanceSteps(now);
    } finally {
      this.advancing = false;
    }
  }

  private advanceSteps(now: number): void {
    for (let guard = 0; guard < 100_000; guard++) {
      const next = this.nextEventTime();
      if (next === null || next > now + TIMER_SLACK_MS) break;
      this.moveTo(Math.max(next, this.lastTime));
      this.handleEventsAt(this.lastTime);
    }
    if (now > this.lastTime) this.moveTo(now);
  }

  /** Moves every train to time `t`, each no further than its limit. */
  private moveTo(t: number): void {
    const dt = t - this.lastTime;
    if (dt <= 0) return;
    for (const train of this.trains) {
      if (train.limit > train.lead) train.lead = Math.min(train.limit, train.lead + train.speed * dt);
    }
    this.lastTime = t;
  }

  private nextEventTime(): number | null {
    let best: number | null = null;
    const consider = (t: number) => {
      if (best === null || t < best) best = t;
    };
    if (this.spawns.length) consider(this.spawns[0].at);
    if (this.cycleEndsAt !== null) consider(this.cycleEndsAt);
    for (const train of this.trains) {
      const room = train.limit - train.lead;
      if (room > EPS_M) {
        for (let k = 0; k < train.axles; k++) {
          const index = train.next[k];
          if (index >= train.path.detectors.length) continue;
          const distance = train.path.detectors[index].pos - (train.lead - k * train.spacing);
          if (distance <= room + EPS_M) consider(this.lastTime + Math.max(0, distance) / train.speed);
        }
        if (Number.isFinite(room)) consider(this.lastTime + room / train.speed);
      } else if (train.limitedBy === "train" && this.isMoving(this.trainAhead(train))) {
        consider(this.lastTime + FOLLOW_RECHECK_MS);
      }
    }
    return best;
  }

  private handleEventsAt(t: number): void {
    while (this.spawns.length && this.spawns[0].at <= t + TIMER_SLACK_MS) this.held.push(this.spawns.shift()!);
    this.appearHeld();
    if (this.cycleEndsAt !== null && this.cycleEndsAt <= t + TIMER_SLACK_MS) this.startCycle(t);
    this.crossDetectors(t);
    const before = this.trains.length;
    this.trains = this.trains.filter((train) => {
      const gone = train.next[train.axles - 1] >= train.path.detectors.length;
      if (gone) this.options.onEvent?.({ type: "leaves", train: train.no, name: train.name });
      return !gone;
    });
    if (this.trains.length < before) this.appearHeld();
    this.updateLimits();
    if (!this.trains.length && !this.spawns.length && !this.held.length && this.cycleEndsAt === null) {
      this.options.onEvent?.({ type: "day-over", cycle: this.cycle });
      if (this.options.loop) this.cycleEndsAt = t + (this.options.scenario.loopPauseS ?? DEFAULT_LOOP_PAUSE_S) * 1000;
    }
  }

  /** Every due train whose route has room appears, in the order they became due. */
  private appearHeld(): void {
    this.held = this.held.filter((spawn) => {
      const group = this.candidatesOf(spawn)[0].group;
      if (this.trains.filter((t) => t.path.group === group).length >= this.maxTrainsPerRoute) return true;
      this.appear(spawn);
      return false;
    });
  }

  private candidatesOf(spawn: Spawn): RoutePath[] {
    const routeIds = typeof spawn.spec.route === "string" ? [spawn.spec.route] : spawn.spec.route;
    return routeIds.map((id) => {
      const path = this.paths.get(id);
      if (!path) throw new Error(`no route "${id}" on ${this.options.layout.slug}`);
      return path;
    });
  }

  private appear(spawn: Spawn): void {
    const routeIds = typeof spawn.spec.route === "string" ? [spawn.spec.route] : spawn.spec.route;
    const candidates = this.candidatesOf(spawn);
    const no = ++this.trainCount;
    const name = spawn.spec.name ?? `Train ${no}`;
    const lead = -LEAD_IN_M;
    this.trains.push({
      no,
      name,
      candidates,
      path: candidates[0],
      roadChosen: candidates.length === 1,
      axles: spawn.spec.axles,
      spacing: spawn.spec.axleSpacingM,
      speed: spawn.spec.speedMps / 1000,
      lead,
      next: Array.from({ length: spawn.spec.axles }, () => 0),
      limit: lead,
      limitedBy: "none",
      waitingReported: false,
    });
    this.options.onEvent?.({ type: "appears", train: no, name, route: routeIds.join("|") });
    this.updateLimits();
  }

  /** Every axle that has reached its next detector pulses there, front train and axle first. */
  private crossDetectors(t: number): void {
    for (const train of this.trains) {
      for (let k = 0; k < train.axles; k++) {
        const position = train.lead - k * train.spacing;
        while (train.next[k] < train.path.detectors.length && position >= train.path.detectors[train.next[k]].pos - EPS_M) {
          const index = train.next[k];
          if (k === 0 && index === train.path.entryIndex && !train.roadChosen) this.chooseRoad(train);
          this.pulse(train.path.detectors[index], t);
          train.next[k] = index + 1;
        }
      }
    }
  }

  private pulse(detector: PathDetector, t: number): void {
    const board = this.boards.find((b) => b.node === detector.node);
    if (!board) return;
    board.seq += 1;
    this.options.send({
      kind: "pulse",
      node: board.node,
      payload: { detector: detector.id, seq: board.seq, boot: board.boot, t: Math.max(0, Math.round((t - board.bootAt) / this.speed)) },
    });
  }

  private updateLimits(): void {
    for (const train of this.trains) {
      let limit = Infinity;
      let limitedBy: Train["limitedBy"] = "none";
      const beforeEntry = train.next[0] <= train.path.entryIndex;
      const signal = train.path.signal;
      // "dark" (nothing heard yet) is treated as danger: fail-safe.
      const aspect = this.aspectOf(signal);
      if (beforeEntry && (aspect === "danger" || aspect === "dark")) {
        limit = train.path.detectors[train.path.entryIndex].pos - STOP_SHORT_M;
        limitedBy = "signal";
      }
      const ahead = this.trainAhead(train);
      if (ahead) {
        // One train at a time on the approach: wait off it until the one ahead is past its signal.
        const aheadOnApproach = ahead.next[ahead.axles - 1] <= ahead.path.entryIndex;
        const behindTail = ahead.lead - (ahead.axles - 1) * ahead.spacing - FOLLOW_GAP_M;
        const tail = aheadOnApproach && train.next[0] === 0 ? Math.min(behindTail, train.path.detectors[0].pos - STOP_SHORT_M) : behindTail;
        if (tail < limit) {
          limit = tail;
          limitedBy = "train";
        }
      }
      // A train never backs up: a limit behind it just means "stand".
      train.limit = Math.max(train.lead, limit);
      train.limitedBy = limitedBy;
      const atSignal = limitedBy === "signal" && train.limit <= train.lead + EPS_M;
      if (atSignal && !train.waitingReported) {
        train.waitingReported = true;
        this.options.onEvent?.({ type: "waits", train: train.no, name: train.name, signal });
      } else if (train.waitingReported && limitedBy !== "signal") {
        train.waitingReported = false;
        this.options.onEvent?.({ type: "proceeds", train: train.no, name: train.name, signal, aspect: this.aspectOf(signal) });
      }
    }
  }

  private isMoving(train: Train | null): boolean {
    return train !== null && train.limit > train.lead + EPS_M;
  }

  /** The nearest earlier train still on the same track (same first detector). */
  private trainAhead(train: Train): Train | null {
    let ahead: Train | null = null;
    for (const other of this.trains) {
      if (other.no >= train.no) continue;
      if (other.path.detectors[0].id !== train.path.detectors[0].id) continue;
      if (!ahead || other.no > ahead.no) ahead = other;
    }
    return ahead;
  }

  /** The signal cleared: the front train waiting for it that has a choice takes the first free road. */
  private chooseRoads(signal: string): void {
    const front = this.trains
      .filter((t) => t.path.signal === signal && t.next[0] <= t.path.entryIndex)
      .sort((a, b) => a.no - b.no)[0];
    if (front && !front.roadChosen) this.chooseRoad(front);
  }

  /**
   * A points command reached the board that drives them (power-worked points only): `moving`
   * at once, the new position after POINTS_MOVE_MS, each as a points report numbered with the
   * board's pulses. A newer command while moving goes straight to its position.
   */
  onPointsSet(node: string, points: string, payload: PointsSetPayload): void {
    const board = this.boards.find((b) => b.node === node && b.points.includes(points));
    const worked = this.options.layout.points.find((p) => p.id === points)?.worked ?? "hand";
    if (!board || worked !== "power" || payload.rev <= (this.pointsRev.get(points) ?? -1)) return;
    this.pointsRev.set(points, payload.rev);
    this.motors.get(points)?.();
    this.motors.delete(points);
    if (this.lies.get(points) === payload.to) return;
    if (this.lies.get(points) !== "moving") {
      this.lies.set(points, "moving");
      this.reportPoints(board, points);
    }
    const cancel = this.options.scheduler.after(POINTS_MOVE_MS, () => {
      this.motors.delete(points);
      this.advanceTo(this.options.scheduler.now());
      this.lies.set(points, payload.to);
      this.reportPoints(board, points);
    });
    this.motors.set(points, cancel);
  }

  /** Where points lie now, as the fake layout's trains find them. */
  pointsLie(points: string): PointsPayload["lies"] | undefined {
    return this.lies.get(points);
  }

  private reportPoints(board: BoardState, points: string): void {
    board.seq += 1;
    this.options.send({ kind: "points", node: board.node, payload: { points, lies: this.lies.get(points)!, seq: board.seq, boot: board.boot } });
  }

  private chooseRoad(train: Train): void {
    const busy = new Set(this.trains.filter((t) => t !== train && t.roadChosen && t.next[0] > t.path.entryIndex).map((t) => t.path.id));
    // A train follows the points: the road they lie for, when the routes say which points they need.
    const followed = train.candidates.find((p) => Object.keys(p.points).length > 0 && Object.entries(p.points).every(([id, lies]) => this.lies.get(id) === lies));
    train.path = followed ?? train.candidates.find((p) => !busy.has(p.id)) ?? train.candidates[0];
    train.roadChosen = true;
    this.options.onEvent?.({ type: "takes-road", train: train.no, name: train.name, route: train.path.id });
  }
}
