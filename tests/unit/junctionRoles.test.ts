import { describe, expect, it } from "vitest";
import { wrenfoldLoopLayout } from "@shared/demo/fernmoor";
import { kestrelTwoRoutesLayout } from "../fixtures/kestrelTwoRoutes";
import { convergingOptionsSchema, facingOptionsSchema } from "@shared/rulebook/templateCatalog";
import { fieldOfPath, initialValues, optionsOf } from "../../src/components/junction/roleForm";
import { detectorsOn, guessRoute } from "../../src/lib/junctionRoles";

const kestrel = kestrelTwoRoutesLayout();
const wrenfold = wrenfoldLoopLayout();

describe("junction roles from the layout's records", () => {
  it("offers only the detectors of a line, in their order along it", () => {
    expect(detectorsOn(kestrel, "main").map((d) => d.id)).toEqual(["MA", "ME", "JX"]);
    expect(detectorsOn(kestrel, "branch").map((d) => d.id)).toEqual(["BA", "BE"]);
  });

  it("guesses a route's signal, entry level with it and the approach before it", () => {
    expect(guessRoute(kestrel, "main")).toEqual({ signal: "M1", approach: ["MA"], entry: "ME" });
    expect(guessRoute(kestrel, "branch")).toEqual({ signal: "B1", approach: ["BA"], entry: "BE" });
  });

  it("fills a converging junction the way the demo's own rulebook has it", () => {
    const options = optionsOf(initialValues(kestrel, "converging-priority", 2));
    expect(options).toEqual({
      routes: kestrel.rulebook.proving!.routes,
      order: "priority",
      priority: "main",
      maxAxles: 2,
      maxTrainsPerRoute: 2,
    });
    expect(convergingOptionsSchema.safeParse(options).success).toBe(true);
    expect(optionsOf(initialValues(kestrel, "converging-first-come", 3))).toMatchObject({ order: "first-come", maxAxles: 3 });
  });

  it("fills a facing junction with one road per line (normal first), beyond the entry", () => {
    const options = optionsOf(initialValues(wrenfold, "facing-power", 2));
    expect(options).toMatchObject({ signal: "W1", approach: ["WA"], entry: "WE", points: "P2", worked: "power", roads: [{ id: "main", exit: ["TX", "TZ"] }, { id: "loop", exit: ["LX", "LZ"] }] });
    expect(facingOptionsSchema.safeParse(options).success).toBe(true);
  });

  it.each([
    ["$.options.routes[1].signal", "routes.1.signal"],
    ["$.routes[0].approach[0]", "routes.0.approach"],
    ["$.options.roads[1].exit[2]", "roads.1.exit"],
    ["$.options", "root"],
  ])("puts the error at %s on the form field %s", (path, field) => {
    expect(fieldOfPath(path)).toBe(field);
  });
});
