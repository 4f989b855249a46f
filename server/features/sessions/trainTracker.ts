/**
 * Follows trains along the rulebook's proving routes from pulses alone (pure; time comes
 * with each pulse), axle by axle as the prover models them (CONTRACT.md §5). A pulse does
 * not say which train made it, so:
 *
 * - at a route's first detector, a pulse within `axleGapMs` of the last one there belongs to
 *   the same train (a train runs past its first approach detector; it does not stop on it);
 *   otherwise it is a new train, whose candidate routes are every route that starts there (a
 *   facing group's train takes its route where the paths part);
 * - elsewhere it is an axle of the oldest train that has more axles past the detector before
 *   this one on its path than past this one;
 * - failing that, of the oldest train with more axles past some detector further back (the
 *   detectors in between missed it: a silent detector must not throw later trains out of step);
 * - failing that, it is *stray*: no train accounts for it.
 *
 * A train occupies its route's section from its leading axle at entry until as many axles
 * have crossed the last exit detector as crossed its first approach detector — or, when some
 * are missing, until `staleMs` after its last pulse there.
 */
import type { ProvingRoute } from "@shared/rulebook/schema";

/** Longest gap between two axles of one train at its first approach detector. */
export const AXLE_GAP_MS = 4_000;
/** A train short of axles at its last exit detector is taken as gone this long after its last pulse. */
export const STALE_MS = 60_000;

export interface TrackedTrain {
  n: number;
  /** Routes it may be on, narrowed as it goes; the first is reported. */
  routes: ProvingRoute[];
  counts: Record<string, number>;
  arrivedAt: number;
  lastAt: number;
  atSignalAt: number | null;
  enteredAt: number | null;
  /** Its leading axle has reached the last exit detector. */
  final: boolean;
  /** Its last axle crossed the last exit detector; null while on the route. */
  clearedAt: number | null;
  /** Time at danger while waiting at its signal (ms). */
  dangerMs: number;
}

export const routePath = (r: ProvingRoute) => [...r.approach, r.entry, ...r.exit];

export class TrainTracker {
  readonly trains: TrackedTrain[] = [];
  readonly stray: Record<string, number> = {};
  /** Trains not yet cleared, oldest first (kept apart: a day has thousands of trains). */
  private live: TrackedTrain[] = [];
  private readonly paths = new Map<ProvingRoute, string[]>();
  private readonly starts = new Map<string, ProvingRoute[]>();
  /** The newest train at each first detector, and its last pulse there. */
  private readonly newest = new Map<string, { train: TrackedTrain; at: number }>();

  constructor(
    routes: ProvingRoute[],
    private readonly axleGapMs = AXLE_GAP_MS,
    private readonly staleMs = STALE_MS,
  ) {
    for (const r of routes) {
      const path = routePath(r);
      this.paths.set(r, path);
      this.starts.set(path[0], [...(this.starts.get(path[0]) ?? []), r]);
    }
  }

  path(r: ProvingRoute): string[] {
    return this.paths.get(r) ?? routePath(r);
  }

  active(): readonly TrackedTrain[] {
    return this.live;
  }

  /** Waiting at its signal: its leading axle is past every approach detector, not yet at entry. */
  static waiting(t: TrackedTrain): boolean {
    return t.atSignalAt !== null && t.enteredAt === null;
  }

  occupies(t: TrackedTrain): boolean {
    return t.enteredAt !== null && t.clearedAt === null;
  }

  axles(t: TrackedTrain): number {
    return t.counts[this.path(t.routes[0])[0]] ?? 0;
  }

  /** Takes trains that finished short of axles off the layout once they are stale. */
  advance(now: number): void {
    for (const t of this.live) if (t.final && now - t.lastAt > this.staleMs) t.clearedAt = t.lastAt;
    this.prune();
  }

  pulse(detector: string, at: number): void {
    this.advance(at);
    const train = this.axleOfTrain(detector) ?? this.firstDetector(detector, at);
    if (!train) {
      this.stray[detector] = (this.stray[detector] ?? 0) + 1;
      return;
    }
    train.counts[detector] = (train.counts[detector] ?? 0) + 1;
    train.lastAt = at;
    const route = train.routes[0];
    const path = this.path(route);
    const index = path.indexOf(detector);
    if (index >= route.approach.length - 1 && train.atSignalAt === null) train.atSignalAt = at;
    if (index >= route.approach.length && train.enteredAt === null) train.enteredAt = at;
    if (index === path.length - 1) {
      train.final = true;
      if (train.counts[detector] >= this.axles(train)) {
        train.clearedAt = at;
        this.prune();
      }
    }
  }

  private prune(): void {
    if (this.live.some((t) => t.clearedAt !== null)) this.live = this.live.filter((t) => t.clearedAt === null);
  }

  /** The train this pulse is an axle of, on a detector past the first of its path (see the file comment). */
  private axleOfTrain(detector: string): TrackedTrain | null {
    let skipping: { train: TrackedTrain; routes: ProvingRoute[] } | null = null;
    for (const t of this.live) {
      const exact: ProvingRoute[] = [];
      const further: ProvingRoute[] = [];
      for (const r of t.routes) {
        const path = this.path(r);
        const index = path.indexOf(detector);
        if (index <= 0) continue;
        const here = t.counts[detector] ?? 0;
        if (here < (t.counts[path[index - 1]] ?? 0)) exact.push(r);
        else if (path.slice(0, index - 1).some((d) => here < (t.counts[d] ?? 0))) further.push(r);
      }
      if (exact.length) {
        t.routes = exact;
        return t;
      }
      if (further.length && !skipping) skipping = { train: t, routes: further };
    }
    if (!skipping) return null;
    skipping.train.routes = skipping.routes;
    return skipping.train;
  }

  private firstDetector(detector: string, at: number): TrackedTrain | null {
    const starting = this.starts.get(detector);
    if (!starting) return null;
    const last = this.newest.get(detector);
    if (last && last.train.clearedAt === null && at - last.at <= this.axleGapMs) {
      last.at = at;
      return last.train;
    }
    const train: TrackedTrain = {
      n: this.trains.length + 1,
      routes: starting,
      counts: {},
      arrivedAt: at,
      lastAt: at,
      atSignalAt: null,
      enteredAt: null,
      final: false,
      clearedAt: null,
      dangerMs: 0,
    };
    this.trains.push(train);
    this.live.push(train);
    this.newest.set(detector, { train, at });
    return train;
  }
}
