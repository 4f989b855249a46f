/**
 * Rulebook templates for common junctions. Each returns a complete rulebook with its
 * `proving` block, ready to validate, prove and publish.
 *
 * ## Converging junction (axle-counted)
 * Two or more routes converge into one section (the junction), from each route's `entry`
 * detector (level with its signal) to its last `exit` detector (beyond the fouling point).
 * - `<route>Approach` counts axles between the route's first approach detector and its entry.
 * - `junction` counts axles in the section. Axles of a train are closer together than any two
 *   detectors, so the count only returns to 0 when the whole train has left.
 * - The selector `route` is `none` or the one route given the junction. A route is given
 *   (its signal cleared) only while the junction is empty; the first axle over the entry puts
 *   the signal back to danger, so a following train on the same route waits; when the junction
 *   is empty again and the signal is at danger, `route` returns to `none` and the next route
 *   is chosen. Conflicting proceeds are impossible because the one selector names one route.
 * - `order: "priority"`: when several routes have trains waiting at release, the priority
 *   route goes first, then the others in the order given. `order: "first-come"`: the selector
 *   `first` remembers which route's train was detected first; when it is served the claim
 *   passes to the next route with a train waiting, so waiting routes take turns.
 * - An axle crossing an entry while its route is not set raises an alarm (a train passed a
 *   signal at danger); the counts are still kept.
 *
 * ## Facing junction (rulebook /2)
 * One signal before facing points leading to two roads (a passing loop): the first road is the
 * points' normal position, the second reverse. Each road is counted from the entry detector to
 * its last exit; `throat` counts the axles over the points (signal to the road's first exit
 * detector), so it is 0 only when no train is on them. The selector `road` names the road a
 * train is given; the signal clears only while the points are *reported* lying for that road,
 * and goes back to danger if they are reported moving or lying otherwise before the train
 * reaches them. The routes name the points they need, so the prover fixes each train's road by
 * where the points lie when it passes the signal (CONTRACT.md §5).
 * - §5 makes the two roads conflict (their sections share the points and run to each road's
 *   end), so a train is given a road only while both roads are empty.
 * - `worked: "power"`: trains take the roads in turn; the rulebook throws the points for the
 *   road only while no train is on the points and the signal is at danger.
 * - `worked: "hand"`: the signaller sets the points; the road they lie for is given if it is free.
 */
import type { Action, Condition, Proving, Rule, Rulebook } from "./schema";
import { RULEBOOK_FORMAT, RULEBOOK_FORMAT_2 } from "./schema";

export interface ConvergingRoute {
  /** Route id, also the value of the `route` selector. Must not be `none`. */
  id: string;
  /** The route's home signal, level with `entry`. */
  signal: string;
  /** Approach detectors in the order a train meets them; the first one starts the count. */
  approach: string[];
  /** Detector level with the signal: the section starts here. */
  entry: string;
  /** Detectors beyond the fouling point in order; the section ends at the last. May be shared. */
  exit: string[];
}

export interface ConvergingJunctionOptions {
  routes: ConvergingRoute[];
  order: "priority" | "first-come";
  /** With `order: "priority"`: the route that goes first (default: the first route). */
  priority?: string;
  maxAxles?: number;
  maxTrainsPerRoute?: number;
}

const NONE = "none";
const SECTION = "junction";

function assertTemplate(condition: boolean, message: string): asserts condition {
  if (!condition) throw new Error(`template: ${message}`);
}

const approachCounter = (routeId: string): string => `${routeId}Approach`;
const isRoute = (selector: string, value: string): Condition => ({ selector, is: value });
const countIs = (count: string, op: "==" | ">", value: number): Condition => ({ count, op, value });

function checkIds(ids: string[], what: string): void {
  assertTemplate(ids.length > 0, `at least one ${what} is needed`);
  assertTemplate(new Set(ids).size === ids.length, `${what} ids must be different`);
  assertTemplate(!ids.includes(NONE), `"${NONE}" cannot be a ${what} id`);
}

/**
 * A converging junction with axle counting; see the module notes for how it works.
 *
 * @example
 * convergingJunction({
 *   routes: [
 *     { id: "main", signal: "M1", approach: ["MA"], entry: "ME", exit: ["JX"] },
 *     { id: "branch", signal: "B1", approach: ["BA"], entry: "BE", exit: ["JX"] },
 *   ],
 *   order: "priority", priority: "main", maxAxles: 2, maxTrainsPerRoute: 2,
 * });
 */
export function convergingJunction(options: ConvergingJunctionOptions): Rulebook {
  const { routes, order } = options;
  checkIds(
    routes.map((route) => route.id),
    "route",
  );
  assertTemplate(new Set(routes.map((route) => route.signal)).size === routes.length, "each route needs its own signal");
  const ownDetectors = routes.flatMap((route) => [route.approach[0], route.entry]);
  assertTemplate(
    routes.every((route) => route.approach.length > 0 && route.exit.length > 0),
    "each route needs approach and exit detectors",
  );
  assertTemplate(new Set(ownDetectors).size === ownDetectors.length, "approach and entry detectors cannot be shared");
  const lastExits = [...new Set(routes.map((route) => route.exit[route.exit.length - 1]))];
  const innerExits = new Set(routes.flatMap((route) => route.exit.slice(0, -1)));
  assertTemplate(
    lastExits.every((detector) => !innerExits.has(detector) && !ownDetectors.includes(detector)),
    "a route's last exit detector cannot be another route's approach, entry or inner exit",
  );
  const priority = order === "priority" ? (options.priority ?? routes[0].id) : undefined;
  assertTemplate(priority === undefined || routes.some((route) => route.id === priority), `unknown priority route "${priority}"`);

  // Routes in the order they are offered the junction.
  const offered = priority === undefined ? routes : [...routes.filter((r) => r.id === priority), ...routes.filter((r) => r.id !== priority)];

  const counters: Record<string, number> = { [SECTION]: 0 };
  for (const route of routes) counters[approachCounter(route.id)] = 0;
  const selectors: Rulebook["selectors"] = { route: { values: [NONE, ...routes.map((route) => route.id)], initial: NONE } };
  if (order === "first-come") selectors.first = { values: [NONE, ...routes.map((route) => route.id)], initial: NONE };
  const initial: Record<string, "danger"> = {};
  for (const route of routes) initial[route.signal] = "danger";

  const rules: Rule[] = [];
  for (const route of routes) {
    rules.push({
      id: `${route.id}-approach`,
      note: `An axle of a ${route.id} train is on the approach to ${route.signal}.`,
      on: { pass: route.approach[0] },
      do: [{ add: approachCounter(route.id), by: 1 }],
    });
    rules.push({
      id: `${route.id}-enters`,
      note: `An axle passes ${route.signal} into the junction; the signal goes back to danger behind the train.`,
      on: { pass: route.entry },
      do: [
        { add: approachCounter(route.id), by: -1 },
        { add: SECTION, by: 1 },
        { show: route.signal, aspect: "danger" },
      ],
    });
    rules.push({
      id: `${route.id}-passed-at-danger`,
      note: `Nothing gave the ${route.id} route, yet an axle passed ${route.signal}.`,
      on: { pass: route.entry },
      if: { not: isRoute("route", route.id) },
      do: [{ alarm: `An axle passed ${route.signal} while the ${route.id} route was not set` }],
    });
  }
  for (const detector of lastExits) {
    rules.push({
      id: `leaves-${detector}`,
      note: `An axle leaves the junction at ${detector}.`,
      on: { pass: detector },
      do: [{ add: SECTION, by: -1 }],
    });
  }
  for (const route of routes) {
    rules.push({
      id: `${route.id}-released`,
      note: `The ${route.id} train has left the junction: free it for the next route.`,
      on: "standing",
      if: { all: [isRoute("route", route.id), countIs(SECTION, "==", 0), { aspect: route.signal, is: "danger" }] },
      do: [{ select: "route", value: NONE }],
    });
  }
  if (order === "first-come") {
    for (const route of routes) {
      rules.push({
        id: `${route.id}-claims`,
        note: `A ${route.id} train is waiting and no other route has claimed the junction first.`,
        on: "standing",
        if: {
          all: [isRoute("first", NONE), countIs(approachCounter(route.id), ">", 0), { not: isRoute("route", route.id) }],
        },
        do: [{ select: "first", value: route.id }],
      });
    }
  }
  for (const route of offered) {
    const conditions: Condition[] = [isRoute("route", NONE), countIs(SECTION, "==", 0), countIs(approachCounter(route.id), ">", 0)];
    const actions: Action[] = [{ select: "route", value: route.id }];
    if (order === "first-come") {
      conditions.push(isRoute("first", route.id));
      actions.push({ select: "first", value: NONE });
    }
    actions.push({ show: route.signal, aspect: "clear" });
    rules.push({
      id: `give-${route.id}`,
      note:
        order === "priority"
          ? `The junction is free and a ${route.id} train is waiting: clear ${route.signal}${route.id === priority ? " (priority route)" : ""}.`
          : `The junction is free and the ${route.id} train came first: clear ${route.signal}.`,
      on: "standing",
      if: { all: conditions },
      do: actions,
    });
  }

  const conflicts: [string, string][] = [];
  for (let i = 0; i < routes.length; i++) {
    for (let j = i + 1; j < routes.length; j++) conflicts.push([routes[i].id, routes[j].id]);
  }
  const proving: Proving = {
    routes: routes.map((route) => ({ ...route, approach: [...route.approach], exit: [...route.exit] })),
    conflicts,
    ...(priority !== undefined ? { priority } : {}),
    maxAxles: options.maxAxles ?? 2,
    maxTrainsPerRoute: options.maxTrainsPerRoute ?? 2,
  };
  return { format: RULEBOOK_FORMAT, latches: {}, counters, selectors, initial, rules, proving };
}

export interface FacingRoad {
  /** Road id, also the value of the `road` selector. Must not be `none`. */
  id: string;
  /** Detectors along the road: the first beyond the fouling point, the last at the road's end. */
  exit: string[];
}

export interface FacingJunctionOptions {
  /** The home signal before the facing points. */
  signal: string;
  approach: string[];
  /** Detector level with the signal. */
  entry: string;
  /** The facing points: the first road is their normal position, the second reverse. */
  points: string;
  /** Exactly two roads. */
  roads: FacingRoad[];
  /**
   * `power`: the rulebook sends each train to the first free road and throws the points;
   * `hand`: a person sets the points and the signal clears for the road they lie for.
   */
  worked: "power" | "hand";
  maxAxles?: number;
  maxTrainsPerRoute?: number;
}

const roadCounter = (roadId: string): string => `${roadId}Road`;
const POSITIONS = ["normal", "reverse"] as const;

/**
 * A facing junction into two roads (e.g. a passing loop), rulebook `/2`; see the module notes.
 *
 * @example
 * facingJunction({ signal: "W1", approach: ["WA"], entry: "WE", points: "P1", worked: "power",
 *   roads: [{ id: "through", exit: ["TX", "TZ"] }, { id: "loop", exit: ["LX", "LZ"] }] });
 */
export function facingJunction(options: FacingJunctionOptions): Rulebook {
  const { signal, approach, entry, points, roads, worked } = options;
  checkIds(
    roads.map((road) => road.id),
    "road",
  );
  assertTemplate(roads.length === 2, "a facing junction has exactly two roads (normal and reverse)");
  assertTemplate(approach.length > 0, "the junction needs an approach detector");
  assertTemplate(roads.every((road) => road.exit.length > 0), "each road needs at least one exit detector");
  const roadDetectors = roads.flatMap((road) => road.exit);
  assertTemplate(new Set(roadDetectors).size === roadDetectors.length, "roads cannot share exit detectors");
  assertTemplate(!roadDetectors.includes(entry) && !roadDetectors.includes(approach[0]), "entry and approach must not be on a road");

  const approachCount = `${signal}Approach`;
  // Axles between the signal and the roads' first detectors (over the points). Axles of a train
  // are closer together than two detectors, so it is 0 only when no train is on the points.
  const throat = "throat";
  const counters: Record<string, number> = { [approachCount]: 0, [throat]: 0 };
  for (const road of roads) counters[roadCounter(road.id)] = 0;
  const lieFor = (index: number) => POSITIONS[index];

  const rules: Rule[] = [
    {
      id: "approach",
      note: `An axle is on the approach to ${signal}.`,
      on: { pass: approach[0] },
      do: [{ add: approachCount, by: 1 }],
    },
  ];
  for (const road of roads) {
    rules.push({
      id: `enters-${road.id}`,
      note: `An axle passes ${signal} towards the ${road.id} road; the signal goes back to danger behind the train.`,
      on: { pass: entry },
      if: isRoute("road", road.id),
      do: [
        { add: approachCount, by: -1 },
        { add: throat, by: 1 },
        { add: roadCounter(road.id), by: 1 },
        { set: "entered" },
        ...(worked === "power" ? [roads.indexOf(road) === 0 ? { set: "useSecond" } : { clear: "useSecond" }] : []),
        { show: signal, aspect: "danger" },
      ],
    });
  }
  rules.push({
    id: "passed-at-danger",
    note: `An axle passed ${signal} with no road set.`,
    on: { pass: entry },
    if: isRoute("road", NONE),
    do: [{ add: approachCount, by: -1 }, { alarm: `An axle passed ${signal} with no road set` }],
  });
  for (const road of roads) {
    rules.push({
      id: `clear-of-points-${road.id}`,
      note: `An axle is past the points on the ${road.id} road.`,
      on: { pass: road.exit[0] },
      do: [{ add: throat, by: -1 }],
    });
    rules.push({
      id: `leaves-${road.id}`,
      note: `An axle leaves the ${road.id} road.`,
      on: { pass: road.exit[road.exit.length - 1] },
      do: [{ add: roadCounter(road.id), by: -1 }],
    });
  }
  rules.push({
    id: "points-moved",
    note: `The points were reported moving, or lying otherwise, before the train reached them: ${signal} back to danger.`,
    on: { moved: points },
    if: { all: [{ not: isRoute("road", NONE) }, countIs(throat, "==", 0)] },
    do: [
      { show: signal, aspect: "danger" },
      { select: "road", value: NONE },
      { clear: "entered" },
    ],
  });
  rules.push({
    id: "road-released",
    note: "The last train is clear of the points: the road can be chosen again.",
    on: "standing",
    if: { all: [{ not: isRoute("road", NONE) }, { latch: "entered" }, countIs(throat, "==", 0)] },
    do: [{ select: "road", value: NONE }, { clear: "entered" }],
  });
  roads.forEach((road, index) => {
    // §5: the roads of one facing group conflict (their sections share the points), so a train
    // is let in only while both roads are empty.
    const free: Condition[] = [isRoute("road", NONE), countIs(throat, "==", 0), countIs(approachCount, ">", 0), ...roads.map((r) => countIs(roadCounter(r.id), "==", 0))];
    if (worked === "power") {
      // Trains take the roads in turn, so both are used and the points are exercised.
      free.push(index === 0 ? { not: { latch: "useSecond" } } : { latch: "useSecond" });
      rules.push({
        id: `give-${road.id}`,
        note: `The ${road.id} road's turn: set the road and throw the points ${lieFor(index)}.`,
        on: "standing",
        if: { all: free },
        do: [
          { select: "road", value: road.id },
          { throw: points, to: lieFor(index) },
        ],
      });
    } else {
      free.push({ points, lies: lieFor(index) });
      rules.push({
        id: `give-${road.id}`,
        note: `The points lie for the ${road.id} road and it is free: set the road.`,
        on: "standing",
        if: { all: free },
        do: [{ select: "road", value: road.id }],
      });
    }
    rules.push({
      id: `clear-${road.id}`,
      note: `The points lie ${lieFor(index)} for the ${road.id} road: clear ${signal}.`,
      on: "standing",
      if: { all: [isRoute("road", road.id), countIs(throat, "==", 0), countIs(approachCount, ">", 0), { points, lies: lieFor(index) }] },
      do: [{ show: signal, aspect: "clear" }],
    });
  });

  const proving: Proving = {
    routes: roads.map((road, index) => ({
      id: road.id,
      signal,
      approach: [...approach],
      entry,
      exit: [...road.exit],
      points: { [points]: lieFor(index) },
    })),
    conflicts: [],
    maxAxles: options.maxAxles ?? 2,
    maxTrainsPerRoute: options.maxTrainsPerRoute ?? 2,
  };
  return {
    format: RULEBOOK_FORMAT_2,
    // `entered`: the train given the current road has passed the signal.
    latches: worked === "power" ? { entered: false, useSecond: false } : { entered: false },
    counters,
    selectors: { road: { values: [NONE, ...roads.map((road) => road.id)], initial: NONE } },
    initial: { [signal]: "danger" },
    rules,
    proving,
  };
}
