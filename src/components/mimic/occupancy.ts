/**
 * What the mimic shades, derived from the live state and the rulebook's proving routes.
 * The rulebook does not say which counter means "a train is in this section", so this is a
 * heuristic that fits the product's templates (and rulebooks written in their style):
 *
 * - A route is **set** when some selector's value is the route's id (e.g. `route = main`).
 * - A route's section (entry detector → last exit detector) is **occupied** when a counter
 *   named for the route is above 0 — `<route>`, `<route>Road`, `<route>Section` — or when the
 *   route is set and a counter not named for any route or signal (a shared section counter
 *   such as `junction`) is above 0.
 * - A train is **waiting** at a signal when a counter `<route>Approach` or `<signal>Approach`
 *   is above 0 while the signal shows danger.
 *
 * Without proving routes nothing is shaded; signals and detectors are still drawn.
 */
import type { ShownAspect } from "@shared/rulebook/schema";

export interface RouteShape {
  id: string;
  signal: string;
  approach: string[];
  entry: string;
  exit: string[];
}

export interface RouteStatus {
  route: RouteShape;
  set: boolean;
  occupied: boolean;
}

export interface Occupancy {
  routes: RouteStatus[];
  /** Signal ids with a train waiting at them. */
  waiting: string[];
}

export interface OccupancyState {
  counters: Record<string, number>;
  selectors: Record<string, string>;
  shown: Record<string, ShownAspect | undefined>;
}

const lower = (s: string) => s.toLowerCase();

export function deriveOccupancy(routes: RouteShape[] | undefined, state: OccupancyState): Occupancy {
  if (!routes || routes.length === 0) return { routes: [], waiting: [] };
  const routeIds = routes.map((r) => lower(r.id));
  const signalIds = routes.map((r) => lower(r.signal));
  const selectorValues = new Set(Object.values(state.selectors));
  const namedForSomething = (counter: string) => {
    const c = lower(counter);
    return routeIds.some((id) => c.startsWith(id)) || signalIds.some((id) => c.startsWith(id));
  };
  const sharedBusy = Object.entries(state.counters).some(([name, n]) => n > 0 && !namedForSomething(name));

  const statuses = routes.map((route): RouteStatus => {
    const id = lower(route.id);
    const own = Object.entries(state.counters).some(([name, n]) => {
      const c = lower(name);
      return n > 0 && (c === id || c === `${id}road` || c === `${id}section`);
    });
    const set = selectorValues.has(route.id);
    return { route, set, occupied: own || (set && sharedBusy) };
  });

  const waiting = new Set<string>();
  for (const route of routes) {
    const approach = (state.counters[`${route.id}Approach`] ?? 0) + (state.counters[`${route.signal}Approach`] ?? 0);
    const aspect = state.shown[route.signal] ?? "dark";
    if (approach > 0 && (aspect === "danger" || aspect === "dark")) waiting.add(route.signal);
  }
  return { routes: statuses, waiting: [...waiting] };
}
