/**
 * The proving model: a rulebook's `proving` block compiled into indices and bit masks
 * (CONTRACT.md §5). Routes, the facing groups they form, the modelled points and the engine
 * inputs the environment can give. Nothing here searches; see `environment.ts` for the moves.
 */
import { pointsMentioned } from "../mentions";
import { RULEBOOK_FORMAT_2, type PointsLie, type Rulebook } from "../schema";

/** Codes of where points lie in packed facts (0 = not yet reported). */
export const LIE_CODE = { unknown: 0, normal: 1, reverse: 2, moving: 3 } as const;
export const LIE_OF_CODE = ["unknown", "normal", "reverse", "moving"] as const;
/** Reports the environment can make of points, in input order. */
export const REPORTED_LIES: readonly PointsLie[] = ["normal", "reverse", "moving"];

export interface RouteModel {
  index: number;
  id: string;
  signal: string;
  /** Index of the route's facing group, and its place in the group. */
  group: number;
  indexInGroup: number;
  /** approach…, entry, exit… */
  path: string[];
  /** Input index of each detector of `path`. */
  pathInput: number[];
  /** Index of `entry` in `path` (= number of approach detectors). */
  entryIndex: number;
  /** Bit mask of the routes this one conflicts with (not itself); routes of one group conflict. */
  conflictMask: number;
  /** Where the route needs each modelled points to lie: (points index, LIE_CODE). */
  needs: { points: number; lies: number }[];
  /** Bit per modelled points the route needs. */
  needsMask: number;
}

/** Routes with the same signal, approach and entry: they share that part of the path (§5). */
export interface GroupModel {
  index: number;
  /** Route indices, in the order the routes are listed; the first names the group in moves. */
  routes: number[];
  /** Bit mask of `routes`. */
  routeMask: number;
  signal: string;
  entryIndex: number;
}

export interface PointsModel {
  index: number;
  id: string;
  worked: "power" | "hand";
  /** Bit mask of the routes that need these points. */
  neededBy: number;
}

/** An engine input of the abstract model. */
export type AbstractInput =
  | { kind: "pulse"; detector: string }
  | { kind: "quiet"; rule: string }
  | { kind: "points"; points: string; lies: PointsLie };

export interface Model {
  rulebook: Rulebook;
  routes: RouteModel[];
  groups: GroupModel[];
  /** The modelled points, sorted by id (empty unless the points model applies). */
  points: PointsModel[];
  inputs: AbstractInput[];
  /** Input index of each quiet rule id, and the rule ids in input order. */
  quietInput: Map<string, number>;
  quietRuleIds: string[];
  /** Input index of the first points report: points p reported `REPORTED_LIES[l]` is `pointsBase + 3p + l`. */
  pointsBase: number;
  maxAxles: number;
  maxTrains: number;
  /** Index of the priority route, or -1. */
  priority: number;
  /** Pairs of route indices whose (different) signals must never both show a proceed. */
  signalConflicts: [number, number][];
  /** Some route names points: `points-set-for-train` and `points-locked` are checked. */
  routePoints: boolean;
  /** Widest facing group. */
  widestGroup: number;
}

/** How each points is worked, when the layout is known (see {@link compileModel}). */
export type PointsWorking = Record<string, "power" | "hand">;

/** Most routes the bit masks allow. */
export const MAX_ROUTES = 30;

/**
 * Compiles the proving model. The points model applies when the rulebook is `/2` or a route
 * names points (§5); the modelled points are those the rulebook or its routes mention. How each
 * is worked comes from `working` (the layout); without it, points some `throw` commands are
 * power-worked and the rest are worked by hand.
 */
export function compileModel(rulebook: Rulebook, working?: PointsWorking): Model {
  const proving = rulebook.proving;
  if (!proving) throw new Error("the rulebook has no proving section");
  if (proving.routes.length > MAX_ROUTES) throw new Error(`the prover handles at most ${MAX_ROUTES} routes`);
  const inputs: AbstractInput[] = [];
  const detectorInput = new Map<string, number>();
  const inputOfDetector = (d: string): number => {
    let i = detectorInput.get(d);
    if (i === undefined) {
      i = inputs.length;
      inputs.push({ kind: "pulse", detector: d });
      detectorInput.set(d, i);
    }
    return i;
  };

  const routePoints = proving.routes.some((r) => Object.keys(r.points ?? {}).length > 0);
  const mentions = pointsMentioned(rulebook);
  const modelled = rulebook.format === RULEBOOK_FORMAT_2 || routePoints ? mentions.all : [];
  const points: PointsModel[] = modelled.map((id, index) => ({
    index,
    id,
    worked: working?.[id] ?? (mentions.thrown.has(id) ? "power" : "hand"),
    neededBy: 0,
  }));
  const pointsIndex = new Map(points.map((p) => [p.id, p.index]));

  const groups: GroupModel[] = [];
  const groupKey = new Map<string, number>();
  const routeIndex = new Map(proving.routes.map((r, i) => [r.id, i]));
  const routes: RouteModel[] = proving.routes.map((r, index) => {
    const path = [...r.approach, r.entry, ...r.exit];
    const key = JSON.stringify([r.signal, r.approach, r.entry]);
    let group = groupKey.get(key);
    if (group === undefined) {
      group = groups.length;
      groupKey.set(key, group);
      groups.push({ index: group, routes: [], routeMask: 0, signal: r.signal, entryIndex: r.approach.length });
    }
    const g = groups[group];
    g.routes.push(index);
    g.routeMask |= 1 << index;
    const needs = Object.entries(r.points ?? {}).map(([id, lies]) => {
      const p = pointsIndex.get(id);
      if (p === undefined) throw new Error(`route ${r.id} needs points ${id}, which are not modelled`);
      points[p].neededBy |= 1 << index;
      return { points: p, lies: LIE_CODE[lies] };
    });
    return {
      index,
      id: r.id,
      signal: r.signal,
      group,
      indexInGroup: g.routes.length - 1,
      path,
      pathInput: path.map(inputOfDetector),
      entryIndex: r.approach.length,
      conflictMask: 0,
      needs,
      needsMask: needs.reduce((mask, n) => mask | (1 << n.points), 0),
    };
  });
  if (points.length > 30) throw new Error("the prover handles at most 30 points");

  const signalConflicts: [number, number][] = [];
  const conflict = (ia: number, ib: number): void => {
    if (ia === ib || (routes[ia].conflictMask & (1 << ib)) !== 0) return;
    routes[ia].conflictMask |= 1 << ib;
    routes[ib].conflictMask |= 1 << ia;
    // "No two signals": two routes read by one signal cannot be told apart by its aspect.
    if (routes[ia].signal !== routes[ib].signal) signalConflicts.push([ia, ib]);
  };
  for (const [a, b] of proving.conflicts ?? []) {
    const ia = routeIndex.get(a);
    const ib = routeIndex.get(b);
    if (ia === undefined || ib === undefined) throw new Error(`conflict names an unknown route: ${a}, ${b}`);
    conflict(ia, ib);
  }
  // Routes of one facing group conflict with each other (§5).
  for (const g of groups) for (const a of g.routes) for (const b of g.routes) if (a < b) conflict(a, b);

  const quietInput = new Map<string, number>();
  const quietRuleIds: string[] = [];
  for (const rule of rulebook.rules) {
    if (typeof rule.on === "object" && "quiet" in rule.on) {
      quietInput.set(rule.id, inputs.length);
      quietRuleIds.push(rule.id);
      inputs.push({ kind: "quiet", rule: rule.id });
    }
  }
  const pointsBase = inputs.length;
  for (const p of points) for (const lies of REPORTED_LIES) inputs.push({ kind: "points", points: p.id, lies });

  let priority = -1;
  if (proving.priority !== undefined) {
    const p = routeIndex.get(proving.priority);
    if (p === undefined) throw new Error(`priority names an unknown route: ${proving.priority}`);
    priority = p;
  }
  return {
    rulebook,
    routes,
    groups,
    points,
    inputs,
    quietInput,
    quietRuleIds,
    pointsBase,
    maxAxles: proving.maxAxles ?? 2,
    maxTrains: proving.maxTrainsPerRoute ?? 2,
    priority,
    signalConflicts,
    routePoints,
    widestGroup: Math.max(1, ...groups.map((g) => g.routes.length)),
  };
}

/** Input index of points `p` reported lying `lies`. */
export function pointsInput(model: Model, p: number, lies: PointsLie): number {
  return model.pointsBase + 3 * p + REPORTED_LIES.indexOf(lies);
}
