import { describe, expect, it } from "vitest";
import { KESTREL_MAX_AXLES, KESTREL_MAX_TRAINS, kestrelBankLayout, WRENFOLD_MAX_AXLES, WRENFOLD_MAX_TRAINS, wrenfoldLoopLayout } from "@shared/demo/fernmoor";
import { initialState, shownAspects, step, type EngineState } from "@shared/rulebook/engine";
import type { Rulebook } from "@shared/rulebook/schema";
import { convergingJunction, facingJunction } from "@shared/rulebook/templates";
import { validateRulebookFile } from "@shared/rulebook/validate";
import { kestrelRoutes, wrenfoldFacing } from "../fixtures/junctions";

const converging = (order: "priority" | "first-come", maxAxles = 2) =>
  convergingJunction({
    routes: kestrelRoutes(),
    order,
    priority: order === "priority" ? "main" : undefined,
    maxAxles,
    maxTrainsPerRoute: 2,
  });

const facing = (worked: "power" | "hand") => wrenfoldFacing(worked, { maxAxles: 2, maxTrainsPerRoute: 2 });

function run(rulebook: Rulebook, detectors: string[], from?: EngineState) {
  let state = from ?? initialState(rulebook);
  for (const detector of detectors) state = step(rulebook, state, { type: "pulse", detector, at: state.clock + 1000 }).state;
  return { state, shown: shownAspects(rulebook, state) };
}

describe("templates validate", () => {
  it.each([
    ["converging, priority", converging("priority")],
    ["converging, first-come", converging("first-come")],
    ["facing, hand-worked", facing("hand")],
    ["facing, power-worked", facing("power")],
  ])("%s", (_name, rulebook) => {
    const result = validateRulebookFile(JSON.parse(JSON.stringify(rulebook)));
    expect(result.ok ? [] : result.errors).toEqual([]);
  });

  it("the Kestrel Bank rulebook is the priority template over its three routes, main line first", () => {
    const demo = convergingJunction({
      routes: [
        { id: "main", signal: "M1", approach: ["MA"], entry: "ME", exit: ["JX"] },
        { id: "branch", signal: "B1", approach: ["BA"], entry: "BE", exit: ["JX"] },
        { id: "shed", signal: "S1", approach: ["SA"], entry: "SE", exit: ["JX"] },
      ],
      order: "priority",
      priority: "main",
      maxAxles: KESTREL_MAX_AXLES,
      maxTrainsPerRoute: KESTREL_MAX_TRAINS,
    });
    expect(kestrelBankLayout().rulebook).toEqual(demo);
    expect(demo.proving!.conflicts).toEqual([
      ["main", "branch"],
      ["main", "shed"],
      ["branch", "shed"],
    ]);
  });

  it.each([
    ["a route called none", () => convergingJunction({ routes: [{ id: "none", signal: "S", approach: ["A"], entry: "E", exit: ["X"] }], order: "priority" })],
    ["a shared signal", () =>
      convergingJunction({
        routes: [
          { id: "a", signal: "S", approach: ["A1"], entry: "E1", exit: ["X"] },
          { id: "b", signal: "S", approach: ["A2"], entry: "E2", exit: ["X"] },
        ],
        order: "first-come",
      })],
    ["an unknown priority route", () => convergingJunction({ routes: [{ id: "a", signal: "S", approach: ["A"], entry: "E", exit: ["X"] }], order: "priority", priority: "b" })],
    ["a facing junction with three roads", () =>
      facingJunction({ signal: "W1", approach: ["WA"], entry: "WE", points: "P", worked: "hand", roads: [{ id: "a", exit: ["A"] }, { id: "b", exit: ["B"] }, { id: "c", exit: ["C"] }] })],
  ])("refuses %s", (_name, make) => {
    expect(make).toThrow(/template/);
  });
});

describe("converging junction traces", () => {
  it("priority: a lone branch train gets the junction; main waits behind it, then goes first", () => {
    const rulebook = converging("priority");
    expect(run(rulebook, ["BA"]).shown).toEqual({ M1: "danger", B1: "clear" });
    const both = run(rulebook, ["MA", "ME", "BA", "MA", "JX"]);
    expect(both.shown).toEqual({ M1: "clear", B1: "danger" });
  });

  it("first-come: the train detected first goes first, then the other route takes its turn", () => {
    const rulebook = converging("first-come");
    // main in the junction; branch arrives, then a second main train; junction frees.
    const tie = run(rulebook, ["MA", "ME", "BA", "MA", "JX"]);
    expect(tie.shown).toEqual({ M1: "danger", B1: "clear" });
    expect(run(rulebook, ["BE", "JX"], tie.state).shown).toEqual({ M1: "clear", B1: "danger" });
  });
});

describe("facing junction traces", () => {
  const report = (rulebook: Rulebook, state: EngineState, lies: "normal" | "reverse" | "moving") =>
    step(rulebook, state, { type: "points", points: "P2", lies, at: state.clock + 100 }).state;

  it("power: throws the points for the road whose turn it is, clears only once they lie for it", () => {
    const rulebook = facing("power");
    let state = report(rulebook, initialState(rulebook), "normal");
    state = run(rulebook, ["WA"], state).state;
    expect(state.selectors.road).toBe("through");
    expect(shownAspects(rulebook, state)).toEqual({ W1: "clear" });
    // The train passes and leaves; the next train's turn is the loop: points thrown reverse.
    state = run(rulebook, ["WE", "TX", "TZ", "WA"], state).state;
    expect(state.selectors.road).toBe("loop");
    expect(state.thrown).toEqual({ P2: "reverse" });
    expect(shownAspects(rulebook, state)).toEqual({ W1: "danger" });
    state = report(rulebook, report(rulebook, state, "moving"), "reverse");
    expect(shownAspects(rulebook, state)).toEqual({ W1: "clear" });
  });

  it("hand: clears for the road the points lie for, and back to danger if they move first", () => {
    const rulebook = facing("hand");
    let state = report(rulebook, initialState(rulebook), "reverse");
    state = run(rulebook, ["WA"], state).state;
    expect(state.selectors.road).toBe("loop");
    expect(shownAspects(rulebook, state)).toEqual({ W1: "clear" });
    state = report(rulebook, state, "moving");
    expect(shownAspects(rulebook, state)).toEqual({ W1: "danger" });
    state = report(rulebook, state, "normal");
    expect(state.selectors.road).toBe("through");
    expect(shownAspects(rulebook, state)).toEqual({ W1: "clear" });
  });
});

/**
 * A small model of the proving environment of CONTRACT.md §5 for a converging junction,
 * to check the template's design here (the real prover lives elsewhere). Trains arrive on
 * routes, each axle crossing the next detector of its route's path is one pulse.
 */
function explore(rulebook: Rulebook) {
  const proving = rulebook.proving!;
  const routes = proving.routes.map((r) => ({ ...r, path: [...r.approach, r.entry, ...r.exit] }));
  type Train = { axles: number[] }; // detectors crossed by each axle, leading axle first
  type World = { engine: EngineState; trains: Train[][] };
  const key = (w: World) =>
    JSON.stringify([w.engine.counters, w.engine.selectors, w.engine.wanted, w.engine.latches, w.trains.map((ts) => ts.map((t) => t.axles))]);
  const entryIndex = (r: number) => routes[r].approach.length;
  const inSection = (r: number, t: Train) => t.axles[0] > entryIndex(r) && t.axles[t.axles.length - 1] < routes[r].path.length;
  const problems = new Set<string>();

  const successors = (w: World, arrivals: boolean): World[] => {
    const next: World[] = [];
    const shown = shownAspects(rulebook, w.engine);
    w.trains.forEach((trains, r) => {
      if (arrivals && trains.length < proving.maxTrainsPerRoute) {
        for (let n = 1; n <= proving.maxAxles; n++) {
          const copy = w.trains.map((ts) => [...ts]);
          copy[r] = [...trains, { axles: new Array(n).fill(0) }];
          next.push({ engine: w.engine, trains: copy });
        }
      }
      trains.forEach((train, t) => {
        train.axles.forEach((crossed, a) => {
          const d = crossed;
          if (d >= routes[r].path.length) return;
          if (a > 0 && train.axles[a - 1] <= d) return; // keep order
          if (a < train.axles.length - 1 && d > 0 && train.axles[a + 1] < d) return; // axles close together
          if (a === 0 && d === entryIndex(r) && shown[routes[r].signal] === "danger") return;
          if (t > 0) {
            const ahead = trains[t - 1];
            if (ahead.axles[ahead.axles.length - 1] <= d) return;
          }
          const result = step(rulebook, w.engine, { type: "pulse", detector: routes[r].path[d], at: 0 });
          if (result.changes.some((c) => c.to === "count-underflow")) problems.add("no-underflow");
          if (result.state.faulted) problems.add("settles");
          const axles = [...train.axles];
          axles[a] = d + 1;
          const copy = w.trains.map((ts) => [...ts]);
          copy[r] = axles[axles.length - 1] === routes[r].path.length ? trains.filter((_, i) => i !== t) : trains.map((x, i) => (i === t ? { axles } : x));
          next.push({ engine: result.state, trains: copy });
        });
      });
    });
    return next;
  };

  const check = (w: World) => {
    const shown = shownAspects(rulebook, w.engine);
    for (const [a, b] of proving.conflicts) {
      const ra = routes.find((r) => r.id === a)!;
      const rb = routes.find((r) => r.id === b)!;
      if (shown[ra.signal] !== "danger" && shown[rb.signal] !== "danger") problems.add("no-conflicting-proceeds");
    }
    const occupied = w.trains.flatMap((ts, r) => ts.filter((t) => inSection(r, t)));
    if (occupied.length > 1) problems.add("one-train-per-section");
    if (proving.priority) {
      const p = routes.findIndex((r) => r.id === proving.priority);
      const waiting = w.trains[p].some((t) => t.axles[0] >= 1 && t.axles[0] <= entryIndex(p));
      const othersPast = w.trains.some((ts, r) => r !== p && ts.some((t) => t.axles[0] >= 1));
      if (waiting && occupied.length === 0 && !othersPast && shown[routes[p].signal] === "danger") problems.add("priority-unhindered");
    }
  };

  const start: World = { engine: initialState(rulebook), trains: routes.map(() => []) };
  const seen = new Map<string, World>([[key(start), start]]);
  const queue = [start];
  while (queue.length > 0) {
    const w = queue.shift()!;
    check(w);
    for (const n of successors(w, true)) {
      const k = key(n);
      if (!seen.has(k)) {
        seen.set(k, n);
        queue.push(n);
      }
    }
  }

  // no-stuck-train: from each state with a train waiting at danger, some run of the trains
  // already there (no arrivals) clears that signal.
  for (const w of seen.values()) {
    w.trains.forEach((trains, r) => {
      const shown = shownAspects(rulebook, w.engine);
      const waits = trains.some((t) => t.axles[0] === entryIndex(r));
      if (!waits || shown[routes[r].signal] !== "danger") return;
      const local = new Set([key(w)]);
      const stack = [w];
      let freed = false;
      while (stack.length > 0 && !freed) {
        for (const n of successors(stack.pop()!, false)) {
          if (shownAspects(rulebook, n.engine)[routes[r].signal] !== "danger") {
            freed = true;
            break;
          }
          const k = key(n);
          if (!local.has(k)) {
            local.add(k);
            stack.push(n);
          }
        }
      }
      if (!freed) problems.add("no-stuck-train");
    });
  }
  return { states: seen.size, problems: [...problems].sort() };
}

describe("converging junction against the proving environment (small model check)", () => {
  it.each([
    ["priority, up to 2 axles", converging("priority", 2)],
    ["first-come, up to 2 axles", converging("first-come", 2)],
  ])("%s: all six properties hold", (_name, rulebook) => {
    const { states, problems } = explore(rulebook);
    expect(problems).toEqual([]);
    expect(states).toBeGreaterThan(1000);
  });

  it("the model check notices a broken design (junction released as soon as the signal clears)", () => {
    const good = converging("priority", 2);
    const broken: Rulebook = {
      ...good,
      rules: good.rules.map((rule) =>
        rule.id === "main-released" ? { ...rule, if: { all: [{ selector: "route", is: "main" }, { count: "junction", op: "<=", value: 1 }] } } : rule,
      ),
    };
    expect(explore(broken).problems.length).toBeGreaterThan(0);
  });
});

describe("demo layouts", () => {
  it("Wrenfold Loop uses the facing template with power-worked points", () => {
    const demo = facing("power");
    demo.proving = { ...demo.proving!, maxAxles: WRENFOLD_MAX_AXLES, maxTrainsPerRoute: WRENFOLD_MAX_TRAINS };
    expect(wrenfoldLoopLayout().rulebook).toEqual(demo);
  });
});
