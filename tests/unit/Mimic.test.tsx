// @vitest-environment happy-dom
import { cleanup, render, screen } from "@testing-library/react";
import { afterEach, describe, expect, it } from "vitest";
import { kestrelBankLayout, wrenfoldLoopLayout } from "@shared/demo/fernmoor";
import { Mimic } from "../../src/components/mimic/Mimic";
import { layoutGeometry, pathBetween, pointAlong, project, slice } from "../../src/components/mimic/geometry";
import { deriveOccupancy } from "../../src/components/mimic/occupancy";

afterEach(cleanup);

const kestrel = kestrelBankLayout();
const routes = kestrel.rulebook.proving!.routes;
const noSchematic = { ...kestrel, schematic: undefined };

describe("Mimic", () => {
  it.each([
    ["M1", "Main home", "clear"],
    ["B1", "Branch home", "caution"],
  ] as const)("draws signal %s with data-signal, data-aspect and the accessible name", (id, name, aspect) => {
    const { container } = render(<Mimic title="Kestrel Bank Junction" layout={kestrel} state={{ shown: { M1: "clear", B1: "caution" } }} />);
    const el = container.querySelector(`[data-signal="${id}"]`);
    expect(el?.getAttribute("data-aspect")).toBe(aspect);
    expect(screen.getByRole("img", { name: `Signal ${id}, ${name}: ${aspect}` })).toBe(el);
  });

  it("draws a signal with no known aspect as dark, and every detector with data-detector", () => {
    const { container } = render(<Mimic title="Kestrel" layout={kestrel} state={{ shown: {} }} />);
    expect(container.querySelector('[data-signal="M1"]')?.getAttribute("data-aspect")).toBe("dark");
    for (const d of kestrel.detectors) expect(container.querySelectorAll(`[data-detector="${d.id}"]`)).toHaveLength(1);
    expect(screen.getByRole("img", { name: "Detector MA, Main approach" })).toBeTruthy();
  });

  it.each([
    ["reverse", "reverse"],
    [undefined, "unknown"],
  ] as const)("draws points with data-points and data-lies (%s)", (lies, drawn) => {
    const { container } = render(<Mimic title="Kestrel" layout={kestrel} state={{ shown: {}, points: { P1: lies } }} />);
    const el = container.querySelector('[data-points="P1"]');
    expect(el?.getAttribute("data-lies")).toBe(drawn);
    expect(screen.getByRole("img", { name: `Points P1, Bank points: ${lies ?? "not reported"}` })).toBe(el);
  });

  it("has no buttons or form controls (the visitor display uses it as it is)", () => {
    const { container } = render(<Mimic title="Kestrel" layout={kestrel} state={{ shown: { M1: "clear" } }} routes={routes} />);
    expect(container.querySelectorAll("button, input, select, textarea")).toHaveLength(0);
  });

  it("marks held signals, waiting trains, pulses and occupied sections", () => {
    const { container } = render(
      <Mimic
        title="Kestrel"
        layout={kestrel}
        routes={routes}
        pulses={{ MA: 3 }}
        state={{ shown: { M1: "danger", B1: "danger" }, held: ["M1"], counters: { mainApproach: 1, junction: 2, branchApproach: 0 }, selectors: { route: "branch" } }}
      />,
    );
    expect(container.querySelector('[data-signal="M1"]')?.getAttribute("data-held")).toBe("true");
    expect(container.querySelector('[data-signal="M1"]')?.getAttribute("data-waiting")).toBe("true");
    expect(container.querySelector('[data-detector="MA"]')?.getAttribute("data-pulses")).toBe("3");
    expect(container.querySelector('[data-route="branch"]')?.getAttribute("data-route-state")).toBe("occupied");
    expect(container.querySelector('[data-route="main"]')).toBeNull();
  });

  it("draws a layout without a schematic automatically", () => {
    const { container } = render(<Mimic title="Kestrel" layout={noSchematic} state={{ shown: { M1: "clear" } }} />);
    expect(container.querySelectorAll("[data-signal]")).toHaveLength(kestrel.signals.length);
    expect(container.querySelectorAll("polyline").length).toBeGreaterThanOrEqual(2);
  });
});

describe("mimic geometry", () => {
  it("uses the schematic's positions where given", () => {
    const g = layoutGeometry(kestrel);
    expect(g.detectors.MA).toEqual([100, 160]);
    expect(g.signals.M1).toEqual([300, 185]);
    expect(g.signalTrack.M1).toEqual([300, 160]);
  });

  it("lays out the first line horizontally and joins a branch at its points", () => {
    const g = layoutGeometry(noSchematic);
    const main = g.tracks.find((t) => t.line === "main")!.points;
    const branch = g.tracks.find((t) => t.line === "branch")!.points;
    expect(main.every((p) => p[1] === main[0][1])).toBe(true);
    const shed = g.tracks.find((t) => t.line === "shed")!.points;
    expect(branch[branch.length - 1]).toEqual(g.points.P1);
    expect(shed[shed.length - 1]).toEqual(g.points.P3);
    expect(g.detectors.MA[0]).toBeLessThan(g.detectors.ME[0]);
    expect(g.detectors.ME[0]).toBeLessThan(g.detectors.JX[0]);
  });

  it("accepts the straight-line shorthand", () => {
    const lines = { main: { x0: 0, y0: 0, x1: 1000, y1: 0 }, branch: { x0: 0, y0: -100, x1: 500, y1: 0 }, shed: { x0: 0, y0: 100, x1: 450, y1: 0 } };
    const g = layoutGeometry({ ...kestrel, schematic: { lines } });
    expect(g.tracks).toHaveLength(3);
    expect(g.detectors.MA[1]).toBe(0);
  });

  it.each([
    [0, [0, 0]],
    [5, [5, 0]],
    [15, [10, 5]],
    [100, [10, 10]],
  ])("finds the point %d along a polyline", (d, expected) => {
    expect(pointAlong([[0, 0], [10, 0], [10, 10]], d)).toEqual(expected);
  });

  it("projects and slices", () => {
    const line: [number, number][] = [[0, 0], [10, 0], [10, 10]];
    expect(project(line, [12, 5]).along).toBe(15);
    expect(slice(line, 5, 15)).toEqual([[5, 0], [10, 0], [10, 5]]);
  });

  it("follows the track from a branch detector to a main-line detector through the junction", () => {
    const g = layoutGeometry(kestrel);
    const path = pathBetween(g, kestrel, "BE", "JX");
    expect(path[0]).toEqual([250, 60]);
    expect(path).toContainEqual([380, 160]);
    expect(path[path.length - 1]).toEqual([450, 160]);
  });

  it("draws Wrenfold Loop's loop road from its schematic", () => {
    const wrenfold = wrenfoldLoopLayout();
    const g = layoutGeometry(wrenfold);
    expect(g.detectors.LX).toEqual([330, 70]);
  });
});

describe("occupancy heuristic", () => {
  it.each([
    ["nothing happening", { counters: { junction: 0, mainApproach: 0 }, selectors: { route: "none" } }, [], []],
    ["main given, junction empty", { counters: { junction: 0, mainApproach: 1 }, selectors: { route: "main" } }, ["main:set"], []],
    ["main train in the junction", { counters: { junction: 2, mainApproach: 0 }, selectors: { route: "main" } }, ["main:occupied"], []],
    ["branch train waiting at B1", { counters: { junction: 0, branchApproach: 2 }, selectors: { route: "none" } }, [], ["B1"]],
  ])("%s", (_name, state, expectedRoutes, waiting) => {
    const o = deriveOccupancy(routes, { ...state, shown: { M1: state.selectors.route === "main" ? "clear" : "danger", B1: "danger" } });
    expect(o.routes.filter((r) => r.set || r.occupied).map((r) => `${r.route.id}:${r.occupied ? "occupied" : "set"}`)).toEqual(expectedRoutes);
    expect(o.waiting).toEqual(waiting);
  });

  it("reads a facing junction's road counters", () => {
    const wrenfold = wrenfoldLoopLayout();
    const o = deriveOccupancy(wrenfold.rulebook.proving!.routes, { counters: { loopRoad: 2, throughRoad: 0, W1Approach: 0 }, selectors: { road: "none" }, shown: { W1: "danger" } });
    expect(o.routes.find((r) => r.route.id === "loop")?.occupied).toBe(true);
    expect(o.routes.find((r) => r.route.id === "through")?.occupied).toBe(false);
  });
});
