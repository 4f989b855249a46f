/**
 * The prover against deliberately broken rulebooks: each one is a mistake a club's signal
 * engineer could make, and each must be refuted on the property it breaks, with a
 * counterexample that really reaches the violation when replayed through `step`.
 * Sound rulebooks (the templates) must be proved.
 */
import { describe, expect, it } from "vitest";
import { shownAspects } from "@shared/rulebook/engine";
import { PROPERTIES, PROPERTY_IDS, prove, replayCounterexample, type PropertyId } from "@shared/rulebook/prove";
import { rulebookSchema, type Rule, type Rulebook, type RulebookInput } from "@shared/rulebook/schema";
import { KESTREL_MAX_AXLES, KESTREL_MAX_TRAINS, kestrelBankLayout, wrenfoldLoopLayout } from "@shared/demo/fernmoor";
import { convergingJunction, facingJunction } from "@shared/rulebook/templates";
import { threeRoutes } from "../fixtures/junctions";

/** Two routes converging at a junction with a shared clearance detector JX. */
const TWO_ROUTES = [
  { id: "main", signal: "M1", approach: ["MA"], entry: "ME", exit: ["JX"] },
  { id: "branch", signal: "B1", approach: ["BA"], entry: "BE", exit: ["JX"] },
];

function junction(
  rules: Rule[],
  extra: Partial<Pick<RulebookInput, "latches" | "counters" | "selectors">> & {
    priority?: string;
    maxAxles?: number;
    maxTrainsPerRoute?: number;
    routes?: typeof TWO_ROUTES;
  } = {},
): Rulebook {
  return rulebookSchema.parse({
    format: "blocklight.rulebook/1",
    latches: extra.latches ?? {},
    counters: extra.counters ?? {},
    selectors: extra.selectors ?? { route: { values: ["none", "main", "branch"], initial: "none" } },
    initial: { M1: "danger", B1: "danger" },
    rules,
    proving: {
      routes: extra.routes ?? TWO_ROUTES,
      conflicts: (extra.routes ?? TWO_ROUTES).length > 1 ? [["main", "branch"]] : [],
      ...(extra.priority ? { priority: extra.priority } : {}),
      maxAxles: extra.maxAxles ?? 2,
      maxTrainsPerRoute: extra.maxTrainsPerRoute ?? 1,
    },
  });
}

/**
 * A sound axle-counted pair of rules for one route (approach count, section count, selector),
 * used as the healthy background most broken rulebooks below change one thing in.
 */
function countedRoute(route: "main" | "branch", signal: string, approach: string, entry: string): Rule[] {
  const waiting = `${route}Approach`;
  return [
    { id: `${route}-approach`, on: { pass: approach }, do: [{ add: waiting, by: 1 }] },
    {
      id: `${route}-enters`,
      on: { pass: entry },
      do: [{ add: waiting, by: -1 }, { add: "junction", by: 1 }, { show: signal, aspect: "danger" }],
    },
    {
      id: `give-${route}`,
      on: "standing",
      if: {
        all: [
          { selector: "route", is: "none" },
          { count: "junction", op: "==", value: 0 },
          { count: waiting, op: ">", value: 0 },
        ],
      },
      do: [{ select: "route", value: route }, { show: signal, aspect: "clear" }],
    },
  ];
}
const countedCounters = { mainApproach: 0, branchApproach: 0, junction: 0 };
const leaveJunction: Rule = { id: "leaves", on: { pass: "JX" }, do: [{ add: "junction", by: -1 }] };
const releaseRoute: Rule = {
  id: "release",
  on: "standing",
  if: {
    all: [
      { not: { selector: "route", is: "none" } },
      { count: "junction", op: "==", value: 0 },
      { aspect: "M1", is: "danger" },
      { aspect: "B1", is: "danger" },
    ],
  },
  do: [{ select: "route", value: "none" }],
};


/** A facing junction at W1 (rulebook /2): `through` needs P1 normal, `loop` needs P1 reverse. */
function facing(rules: Rule[], options: { throws?: boolean; loopOnly?: boolean } = {}): Rulebook {
  const loop = { id: "loop", signal: "W1", approach: ["WA"], entry: "WE", exit: ["LX"], points: { P1: "reverse" as const } };
  const through = { id: "through", signal: "W1", approach: ["WA"], entry: "WE", exit: ["TX"], points: { P1: "normal" as const } };
  return rulebookSchema.parse({
    format: "blocklight.rulebook/2",
    counters: { waiting: 0 },
    initial: { W1: "danger" },
    rules,
    proving: { routes: options.loopOnly ? [loop] : [through, loop], conflicts: [], maxAxles: 1, maxTrainsPerRoute: 1 },
  });
}
const waitingCount: Rule = { id: "waiting", on: { pass: "WA" }, do: [{ add: "waiting", by: 1 }] };
const entered: Rule = { id: "entered", on: { pass: "WE" }, do: [{ add: "waiting", by: -1 }, { show: "W1", aspect: "danger" }] };
const clearOnApproach: Rule = { id: "clear", on: "standing", if: { count: "waiting", op: ">", value: 0 }, do: [{ show: "W1", aspect: "clear" }] };

interface Broken {
  name: string;
  breaks: PropertyId;
  rulebook: Rulebook;
}

const BROKEN: Broken[] = [
  // ---- points-set-for-train ---------------------------------------------------------
  {
    name: "the signal clears for the loop without throwing the points, which lie normal",
    breaks: "points-set-for-train",
    rulebook: facing([waitingCount, entered, clearOnApproach, { id: "never", on: { pass: "LX" }, do: [{ throw: "P1", to: "reverse" }] }], { loopOnly: true }),
  },
  {
    name: "hand points may be moved while the signal is clear and the train has not reached it",
    breaks: "points-set-for-train",
    rulebook: facing([waitingCount, entered, clearOnApproach]),
  },
  // ---- points-locked ---------------------------------------------------------------
  {
    name: "the points are thrown and the signal cleared in one go",
    breaks: "points-locked",
    rulebook: facing([
      waitingCount,
      entered,
      { id: "set-and-clear", on: "standing", if: { count: "waiting", op: ">", value: 0 }, do: [{ throw: "P1", to: "reverse" }, { show: "W1", aspect: "clear" }] },
    ]),
  },
  {
    name: "the points are thrown back for the next train as soon as the train passes the signal",
    breaks: "points-locked",
    rulebook: facing([
      waitingCount,
      { ...entered, do: [...entered.do, { throw: "P1", to: "normal" }] },
      { id: "set", on: { pass: "WA" }, do: [{ throw: "P1", to: "reverse" }] },
      { id: "clear-when-set", on: { moved: "P1" }, if: { all: [{ points: "P1", lies: "moving" }, { count: "waiting", op: ">", value: 0 }] }, do: [] },
      { id: "clear", on: "standing", if: { all: [{ count: "waiting", op: ">", value: 0 }, { points: "P1", lies: "reverse" }] }, do: [{ show: "W1", aspect: "clear" }] },
    ]),
  },
  // ---- no-conflicting-proceeds -------------------------------------------------------
  {
    name: "each route clears its own signal on approach, ignoring the other route",
    breaks: "no-conflicting-proceeds",
    rulebook: junction([
      { id: "main-approach", on: { pass: "MA" }, do: [{ show: "M1", aspect: "clear" }] },
      { id: "main-enters", on: { pass: "ME" }, do: [{ show: "M1", aspect: "danger" }] },
      { id: "branch-approach", on: { pass: "BA" }, do: [{ show: "B1", aspect: "clear" }] },
      { id: "branch-enters", on: { pass: "BE" }, do: [{ show: "B1", aspect: "danger" }] },
    ]),
  },
  {
    name: "a quiet approach detector is trusted to mean the main train has gone, and frees the route",
    breaks: "no-conflicting-proceeds",
    rulebook: junction(
      [
        ...countedRoute("main", "M1", "MA", "ME"),
        ...countedRoute("branch", "B1", "BA", "BE"),
        leaveJunction,
        releaseRoute,
        // The mistake: the route is given up after MA has been silent, although M1 is still clear.
        { id: "main-gone", on: { quiet: "MA", ms: 5000 }, do: [{ select: "route", value: "none" }] },
      ],
      { counters: countedCounters },
    ),
  },
  // ---- one-train-per-section ---------------------------------------------------------
  {
    name: "the first axle out is trusted to mean the whole train is clear",
    breaks: "one-train-per-section",
    rulebook: junction(
      [
        { id: "main-approach", on: { pass: "MA" }, do: [{ add: "mainApproach", by: 1 }] },
        { id: "branch-approach", on: { pass: "BA" }, do: [{ add: "branchApproach", by: 1 }] },
        { id: "main-enters", on: { pass: "ME" }, do: [{ add: "mainApproach", by: -1 }, { set: "occupied" }, { show: "M1", aspect: "danger" }] },
        { id: "branch-enters", on: { pass: "BE" }, do: [{ add: "branchApproach", by: -1 }, { set: "occupied" }, { show: "B1", aspect: "danger" }] },
        // The mistake: a latch, cleared by the first axle over JX, stands for "junction occupied".
        { id: "clear-out", on: { pass: "JX" }, do: [{ clear: "occupied" }] },
        {
          id: "give-main",
          on: "standing",
          if: { all: [{ not: { latch: "occupied" } }, { count: "mainApproach", op: ">", value: 0 }, { aspect: "B1", is: "danger" }, { selector: "route", is: "none" }] },
          do: [{ select: "route", value: "main" }, { show: "M1", aspect: "clear" }],
        },
        {
          id: "give-branch",
          on: "standing",
          if: { all: [{ not: { latch: "occupied" } }, { count: "branchApproach", op: ">", value: 0 }, { aspect: "M1", is: "danger" }, { selector: "route", is: "none" }] },
          do: [{ select: "route", value: "branch" }, { show: "B1", aspect: "clear" }],
        },
        {
          id: "release",
          on: "standing",
          if: { all: [{ not: { latch: "occupied" } }, { not: { selector: "route", is: "none" } }, { aspect: "M1", is: "danger" }, { aspect: "B1", is: "danger" }] },
          do: [{ select: "route", value: "none" }],
        },
      ],
      { latches: { occupied: false }, counters: { mainApproach: 0, branchApproach: 0 } },
    ),
  },
  {
    name: "the signal goes back to danger only when the train leaves, so a following train is let in",
    breaks: "one-train-per-section",
    rulebook: junction(
      [
        { id: "main-approach", on: { pass: "MA" }, do: [{ add: "mainApproach", by: 1 }] },
        // The mistake: entering does not put M1 back to danger; that waits for the exit.
        { id: "main-enters", on: { pass: "ME" }, do: [{ add: "mainApproach", by: -1 }, { add: "junction", by: 1 }] },
        { id: "main-leaves", on: { pass: "JX" }, do: [{ add: "junction", by: -1 }, { show: "M1", aspect: "danger" }] },
        {
          id: "give-main",
          on: "standing",
          if: { all: [{ count: "mainApproach", op: ">", value: 0 }, { aspect: "M1", is: "danger" }, { count: "junction", op: "==", value: 0 }] },
          do: [{ show: "M1", aspect: "clear" }],
        },
      ],
      { counters: { mainApproach: 0, junction: 0 }, routes: [TWO_ROUTES[0]], maxTrainsPerRoute: 2, maxAxles: 1 },
    ),
  },
  {
    name: "a quiet entry detector is trusted to mean the section is clear",
    breaks: "one-train-per-section",
    rulebook: junction(
      [
        ...countedRoute("main", "M1", "MA", "ME"),
        ...countedRoute("branch", "B1", "BA", "BE"),
        releaseRoute,
        // The mistake: no exit count; the section is emptied by timers on the entry detectors.
        { id: "main-timed-out", on: { quiet: "ME", ms: 8000 }, do: [{ zero: "junction" }] },
        { id: "branch-timed-out", on: { quiet: "BE", ms: 8000 }, do: [{ zero: "junction" }] },
      ],
      { counters: countedCounters },
    ),
  },
  // ---- no-underflow ------------------------------------------------------------------
  {
    name: "the branch's entry rule forgets to count into the junction, but the shared exit counts every axle out",
    breaks: "no-underflow",
    rulebook: junction(
      [
        ...countedRoute("main", "M1", "MA", "ME"),
        ...countedRoute("branch", "B1", "BA", "BE").map((rule) =>
          rule.id === "branch-enters" ? { ...rule, do: rule.do.filter((a) => !("add" in a && a.add === "junction")) } : rule,
        ),
        leaveJunction,
        releaseRoute,
      ],
      { counters: countedCounters, maxAxles: 1 },
    ),
  },
  {
    name: "a quiet approach zeroes the approach count while axles are still to pass the signal",
    breaks: "no-underflow",
    rulebook: junction(
      [
        ...countedRoute("main", "M1", "MA", "ME"),
        leaveJunction,
        releaseRoute,
        { id: "approach-reset", on: { quiet: "MA", ms: 10000 }, do: [{ zero: "mainApproach" }] },
      ],
      { counters: countedCounters, routes: [TWO_ROUTES[0]] },
    ),
  },
  // ---- settles -----------------------------------------------------------------------
  {
    name: "give and release rules that undo each other while a train approaches",
    breaks: "settles",
    rulebook: junction(
      [
        { id: "main-approach", on: { pass: "MA" }, do: [{ add: "mainApproach", by: 1 }] },
        { id: "main-enters", on: { pass: "ME" }, do: [{ add: "mainApproach", by: -1 }, { show: "M1", aspect: "danger" }] },
        {
          id: "give-main",
          on: "standing",
          if: { all: [{ selector: "route", is: "none" }, { count: "mainApproach", op: ">", value: 0 }] },
          do: [{ select: "route", value: "main" }, { show: "M1", aspect: "clear" }],
        },
        // The mistake: the release does not wait for the signal to go back to danger.
        {
          id: "release",
          on: "standing",
          if: { selector: "route", is: "main" },
          do: [{ select: "route", value: "none" }, { show: "M1", aspect: "danger" }],
        },
      ],
      { counters: { mainApproach: 0 }, routes: [TWO_ROUTES[0]], maxAxles: 1 },
    ),
  },
  {
    name: "two signals each giving way to the other while both routes have trains waiting",
    breaks: "settles",
    rulebook: junction(
      [
        { id: "main-approach", on: { pass: "MA" }, do: [{ set: "mainWaiting" }] },
        { id: "branch-approach", on: { pass: "BA" }, do: [{ set: "branchWaiting" }] },
        { id: "main-enters", on: { pass: "ME" }, do: [{ clear: "mainWaiting" }, { show: "M1", aspect: "danger" }] },
        { id: "branch-enters", on: { pass: "BE" }, do: [{ clear: "branchWaiting" }, { show: "B1", aspect: "danger" }] },
        {
          id: "main-gives-way",
          on: "standing",
          if: { all: [{ latch: "branchWaiting" }, { aspect: "M1", is: "clear" }] },
          do: [{ show: "M1", aspect: "danger" }, { show: "B1", aspect: "clear" }],
        },
        {
          id: "branch-gives-way",
          on: "standing",
          if: { all: [{ latch: "mainWaiting" }, { aspect: "B1", is: "clear" }] },
          do: [{ show: "B1", aspect: "danger" }, { show: "M1", aspect: "clear" }],
        },
        {
          id: "give-main",
          on: "standing",
          if: { all: [{ latch: "mainWaiting" }, { aspect: "M1", is: "danger" }, { aspect: "B1", is: "danger" }] },
          do: [{ show: "M1", aspect: "clear" }],
        },
      ],
      { latches: { mainWaiting: false, branchWaiting: false }, maxAxles: 1 },
    ),
  },
  // ---- no-stuck-train ----------------------------------------------------------------
  {
    name: "the branch is let in only after a main train has passed (alternate working), so it can wait for ever",
    breaks: "no-stuck-train",
    rulebook: junction(
      [
        ...countedRoute("main", "M1", "MA", "ME"),
        ...countedRoute("branch", "B1", "BA", "BE").map((rule) =>
          rule.id === "give-branch" ? { ...rule, if: { all: [rule.if!, { latch: "mainHasRun" }] } } : rule,
        ),
        { id: "leaves", on: { pass: "JX" }, do: [{ add: "junction", by: -1 }] },
        { id: "main-ran", on: { pass: "ME" }, do: [{ set: "mainHasRun" }] },
        { id: "branch-ran", on: { pass: "BE" }, do: [{ clear: "mainHasRun" }] },
        releaseRoute,
      ],
      { counters: countedCounters, latches: { mainHasRun: false }, maxAxles: 1 },
    ),
  },
  {
    name: "the route is released only by the main line's exit, so after a branch train the route stays set",
    breaks: "no-stuck-train",
    rulebook: junction(
      [
        ...countedRoute("main", "M1", "MA", "ME"),
        ...countedRoute("branch", "B1", "BA", "BE"),
        { id: "leaves", on: { pass: "JX" }, do: [{ add: "junction", by: -1 }] },
        // The mistake: only a main train frees the route.
        { id: "release-main", on: { pass: "JX" }, if: { selector: "route", is: "main" }, do: [{ select: "route", value: "none" }] },
      ],
      { counters: countedCounters, maxAxles: 1 },
    ),
  },
  // ---- priority-unhindered -----------------------------------------------------------
  {
    name: "the main signal is approach-released by a timer: the train must stand before it clears",
    breaks: "priority-unhindered",
    rulebook: junction(
      [
        ...countedRoute("main", "M1", "MA", "ME").map((rule) =>
          rule.id === "give-main" ? { ...rule, if: { all: [rule.if!, { latch: "mainStanding" }] } } : rule,
        ),
        ...countedRoute("branch", "B1", "BA", "BE"),
        { id: "main-stands", on: { quiet: "MA", ms: 4000 }, do: [{ set: "mainStanding" }] },
        { id: "main-goes", on: { pass: "ME" }, do: [{ clear: "mainStanding" }] },
        leaveJunction,
        releaseRoute,
      ],
      { counters: countedCounters, latches: { mainStanding: false }, priority: "main", maxAxles: 1 },
    ),
  },
  {
    name: "the branch route is freed by a timer after the branch train leaves, checking a main train in the meantime",
    breaks: "priority-unhindered",
    rulebook: junction(
      [
        ...countedRoute("main", "M1", "MA", "ME"),
        ...countedRoute("branch", "B1", "BA", "BE"),
        leaveJunction,
        // Main frees its route at once; the branch waits for JX to fall quiet.
        { ...releaseRoute, id: "release-main", if: { all: [releaseRoute.if!, { selector: "route", is: "main" }] } },
        {
          id: "release-branch",
          on: { quiet: "JX", ms: 3000 },
          if: { all: [{ selector: "route", is: "branch" }, { count: "junction", op: "==", value: 0 }] },
          do: [{ select: "route", value: "none" }],
        },
      ],
      { counters: countedCounters, priority: "main", maxAxles: 1 },
    ),
  },
];

/** Checks, independently of the prover's own bookkeeping, that the replay's end really breaks `property`. */
function assertReallyBroken(rulebook: Rulebook, property: PropertyId, moves: NonNullable<ReturnType<typeof prove>["properties"][number]["counterexample"]>): void {
  const replay = replayCounterexample(rulebook, moves);
  const last = replay.steps.at(-1);
  const state = last?.state ?? replay.initial;
  const shown = shownAspects(rulebook, state);
  const routes = rulebook.proving!.routes;
  const conflicts = rulebook.proving!.conflicts;
  switch (property) {
    case "settles":
      expect(state.faulted?.reason).toMatch(/rule loop/);
      break;
    case "no-underflow":
      expect(last?.changes.some((c) => c.kind === "alarm" && c.to === "count-underflow")).toBe(true);
      break;
    case "no-conflicting-proceeds":
      expect(
        conflicts.some(([a, b]) => {
          const sa = routes.find((r) => r.id === a)!.signal;
          const sb = routes.find((r) => r.id === b)!.signal;
          return shown[sa] !== "danger" && shown[sb] !== "danger";
        }),
      ).toBe(true);
      break;
    case "one-train-per-section": {
      const inSection = last!.trains.filter((t) => t.crossed[0] > routes.find((r) => r.id === t.route)!.approach.length);
      const clash =
        inSection.length > 1 &&
        inSection.some((t, i) =>
          inSection.some(
            (u, j) => i !== j && (t.route === u.route || conflicts.some(([a, b]) => (a === t.route && b === u.route) || (a === u.route && b === t.route))),
          ),
        );
      expect(clash).toBe(true);
      break;
    }
    case "points-set-for-train": {
      // The last move is a leading axle crossing entry, and no route of the group has its points.
      const move = last!.move;
      expect(move.type === "pulse" && routes.some((r) => r.entry === move.detector)).toBe(true);
      const lies = state.points;
      expect(routes.some((r) => Object.entries(r.points ?? {}).every(([p, want]) => lies[p] === want))).toBe(false);
      break;
    }
    case "points-locked": {
      // The last move starts power-worked points moving.
      const move = last!.move;
      expect(move.type === "points" && move.lies === "moving").toBe(true);
      break;
    }
    case "no-stuck-train":
    case "priority-unhindered": {
      // A train waits at its signal (leading axle over every approach detector, not entry) at danger.
      const waiting = last!.trains.filter((t) => {
        const r = routes.find((route) => route.id === t.route)!;
        return t.crossed[0] === r.approach.length && shown[r.signal] === "danger";
      });
      expect(waiting.length).toBeGreaterThan(0);
      if (property === "priority-unhindered") expect(waiting.some((t) => t.route === rulebook.proving!.priority)).toBe(true);
      break;
    }
  }
  expect(last ? last.violates : replay.initialViolates).toContain(property);
}

describe("the prover refutes broken rulebooks on the property they break", () => {
  it("has at least two broken rulebooks for every property", () => {
    for (const id of PROPERTY_IDS) expect(BROKEN.filter((b) => b.breaks === id).length).toBeGreaterThanOrEqual(2);
  });

  it.each(BROKEN.map((b) => [b.breaks, b.name, b] as const))("%s: %s", (property, _name, broken) => {
    const result = prove(broken.rulebook, { maxStates: 500_000 });
    expect(result.verdict).toBe("refuted");
    const found = result.properties.find((p) => p.id === property)!;
    expect(found.holds).toBe(false);
    expect(found.counterexample).toBeDefined();
    assertReallyBroken(broken.rulebook, property, found.counterexample!);
  });

  it("gives the shortest counterexample (a one-axle, one-route count-down mistake needs exactly 4 moves)", () => {
    const rulebook = BROKEN.find((b) => b.name.startsWith("the branch's entry rule forgets"))!.rulebook;
    const found = prove(rulebook).properties.find((p) => p.id === "no-underflow")!;
    // arrive on the branch, BA, BE, JX: the branch train is the only way to pass JX uncounted.
    expect(found.counterexample).toEqual([
      { type: "arrive", route: "branch", axles: 1 },
      { type: "pulse", detector: "BA", route: "branch", train: 1 },
      { type: "pulse", detector: "BE", route: "branch", train: 1 },
      { type: "pulse", detector: "JX", route: "branch", train: 1 },
    ]);
  });
});

describe("the prover proves sound rulebooks", () => {
  const templates: [string, Rulebook][] = [
    ["converging, priority, 2 routes", convergingJunction({ routes: TWO_ROUTES, order: "priority", priority: "main", maxAxles: 2, maxTrainsPerRoute: 2 })],
    ["converging, first-come, 2 routes", convergingJunction({ routes: TWO_ROUTES, order: "first-come", maxAxles: 2, maxTrainsPerRoute: 2 })],
    [
      "converging, priority, 3 routes, 2 approach detectors",
      convergingJunction({
        routes: [
          { id: "up", signal: "U1", approach: ["UA", "UB"], entry: "UE", exit: ["UX", "JX"] },
          { id: "down", signal: "D1", approach: ["DA"], entry: "DE", exit: ["JX"] },
          { id: "goods", signal: "G1", approach: ["GA"], entry: "GE", exit: ["JX"] },
        ],
        order: "priority",
        priority: "up",
        maxAxles: 2,
        maxTrainsPerRoute: 1,
      }),
    ],
    [
      "converging, first-come, 3 routes",
      convergingJunction({
        routes: threeRoutes(),
        order: "first-come",
        maxAxles: 2,
        maxTrainsPerRoute: 1,
      }),
    ],
  ];

  it.each(templates)("template: %s", (_name, rulebook) => {
    const result = prove(rulebook);
    expect(result.properties.filter((p) => p.holds !== true)).toEqual([]);
    expect(result.verdict).toBe("proved");
  });

  // §5 (/2): a train's road is fixed by where the points lie as it passes the signal.
  it.each(["power", "hand"] as const)("template: facing junction, %s-worked points", (worked) => {
    const rulebook = facingJunction({
      signal: "W1",
      approach: ["WA"],
      entry: "WE",
      points: "P1",
      worked,
      roads: [
        { id: "through", exit: ["TX", "TZ"] },
        { id: "loop", exit: ["LX", "LZ"] },
      ],
      maxAxles: 3,
    });
    const result = prove(rulebook, { points: { P1: worked } });
    expect(result.properties.filter((p) => p.holds !== true)).toEqual([]);
    expect(result.properties.map((p) => p.id)).toContain("points-locked");
    expect(result.verdict).toBe("proved");
  });

  it("the Wrenfold Loop demo is proved (power-worked points, as its layout says) for 8-axle trains, 3 at once", () => {
    const layout = wrenfoldLoopLayout();
    const points = Object.fromEntries(layout.points.map((p) => [p.id, p.worked ?? "hand"]));
    expect(layout.rulebook.proving).toMatchObject({ maxAxles: 8, maxTrainsPerRoute: 3 });
    expect(prove(layout.rulebook, { points }).verdict).toBe("proved");
  });

  it("the Kestrel Bank demo (three routes) is proved for the trains its fake layout runs: 4 axles, 2 at once on each route", () => {
    const layout = kestrelBankLayout();
    expect(layout.rulebook.proving).toMatchObject({ maxAxles: KESTREL_MAX_AXLES, maxTrainsPerRoute: KESTREL_MAX_TRAINS });
    expect(layout.rulebook.proving!.routes.map((r) => r.id)).toEqual(["main", "branch", "shed"]);
    expect(prove(layout.rulebook).verdict).toBe("proved");
  }, 60_000);

  /** Big enough (about 150,000 states, reduced) that progress is reported several times. */
  const threeRoutesThreeTrains = (): Rulebook =>
    convergingJunction({
      routes: threeRoutes(),
      order: "priority",
      maxAxles: 6,
      maxTrainsPerRoute: 3,
    });

  it("never says proved when it stops at a limit", () => {
    const result = prove(threeRoutesThreeTrains(), { maxStates: 1000 });
    expect(result.verdict).toBe("unfinished");
    expect(result.reason).toMatch(/state limit/);
    expect(result.properties.every((p) => p.holds === null)).toBe(true);
  });

  it("stops when cancelled and reports progress", () => {
    const rulebook = threeRoutesThreeTrains();
    const seen: { states: number; frontier: number; depth: number }[] = [];
    const result = prove(rulebook, { onProgress: (p) => seen.push(p), shouldCancel: () => seen.length >= 2 });
    expect(result.verdict).toBe("unfinished");
    expect(result.reason).toBe("cancelled");
    expect(seen.length).toBe(2);
    expect(seen[1].states).toBeGreaterThan(seen[0].states);
    expect(seen[1].depth).toBeGreaterThan(0);
  });

  it("stops at the time limit with an injected clock", () => {
    let clock = 0;
    const result = prove(threeRoutesThreeTrains(), { now: () => (clock += 1000), maxMs: 5000 });
    expect(result.verdict).toBe("unfinished");
    expect(result.reason).toMatch(/time limit/);
  });

  it("describes every property", () => {
    expect(PROPERTIES.map((p) => p.id)).toEqual([...PROPERTY_IDS]);
    for (const p of PROPERTIES) expect(p.description.length).toBeGreaterThan(20);
  });
});
