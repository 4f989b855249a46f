import { describe, expect, it } from "vitest";
import { wrenfoldLoopLayout } from "@shared/demo/fernmoor";
import { kestrelTwoRoutesLayout } from "../fixtures/kestrelTwoRoutes";
import { toJsonPath, validateLayoutFile, validateRulebookFile } from "@shared/rulebook/validate";

/** A fresh, plain-JSON Kestrel Bank layout to break. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- tests poke at arbitrary JSON
type Json = any;
const kestrel = (): Json => JSON.parse(JSON.stringify(kestrelTwoRoutesLayout()));

function errorPaths(input: unknown): string[] {
  const result = validateLayoutFile(input);
  return result.ok ? [] : result.errors.map((error) => error.path);
}

describe("validateLayoutFile", () => {
  it.each([
    ["the demo layouts", kestrelTwoRoutesLayout()],
    ["Wrenfold Loop", wrenfoldLoopLayout()],
  ])("accepts %s", (_name, layout) => {
    const result = validateLayoutFile(JSON.parse(JSON.stringify(layout)));
    expect(result.ok).toBe(true);
  });

  const broken: [string, (layout: Json) => void, string[]][] = [
    ["wrong format", (l) => (l.format = "blocklight.layout/2"), ["$.format"]],
    ["bad slug", (l) => (l.slug = "Kestrel Bank"), ["$.slug"]],
    ["negative position", (l) => (l.detectors[0].at = -1), ["$.detectors[0].at"]],
    ["unknown field", (l) => (l.signals[1].colour = "red"), ["$.signals[1].colour"]],
    ["bad aspect in a show action", (l) => (l.rulebook.rules[9].do[1].aspect = "green"), ["$.rulebook.rules[9].do[1].aspect"]],
    ["bad comparison", (l) => (l.rulebook.rules[9].if.all[1].op = "="), ["$.rulebook.rules[9].if.all[1].op"]],
    ["unrecognisable action", (l) => (l.rulebook.rules[0].do[0] = { bump: "x" }), ["$.rulebook.rules[0].do[0]"]],
    ["unrecognisable trigger", (l) => (l.rulebook.rules[0].on = { passes: "MA" }), ["$.rulebook.rules[0].on"]],
    ["fractional count", (l) => (l.rulebook.rules[0].do[0].by = 0.5), ["$.rulebook.rules[0].do[0].by"]],
    ["duplicate line", (l) => l.lines.push({ id: "main", name: "Again" }), ["$.lines[2].id"]],
    ["duplicate detector", (l) => l.detectors.push({ ...l.detectors[0] }), ["$.detectors[5].id"]],
    ["duplicate signal", (l) => l.signals.push({ ...l.signals[0] }), ["$.signals[2].id"]],
    ["duplicate points", (l) => l.points.push({ ...l.points[0] }), ["$.points[1].id"]],
    ["duplicate node", (l) => l.nodes.push({ id: "quarry", name: "Again", detectors: [], signals: [] }), ["$.nodes[3].id"]],
    ["detector on unknown line", (l) => (l.detectors[1].line = "tramway"), ["$.detectors[1].line"]],
    ["signal on unknown line", (l) => (l.signals[0].line = "tramway"), ["$.signals[0].line"]],
    ["points on unknown line", (l) => (l.points[0].line = "tramway"), ["$.points[0].line"]],
    ["signal without danger (and every use of danger on it)", (l) => (l.signals[0].aspects = ["clear"]), [
      "$.signals[0].aspects",
      "$.rulebook.initial.M1",
      "$.rulebook.rules[1].do[2].aspect",
      "$.rulebook.rules[7].if.all[2].is",
    ]],
    ["node serving unknown detector", (l) => l.nodes[0].detectors.push("ZZ"), ["$.nodes[0].detectors[1]"]],
    ["node serving unknown signal", (l) => l.nodes[0].signals.push("Z9"), ["$.nodes[0].signals[0]"]],
    ["detector served by two nodes", (l) => l.nodes[2].detectors.push("MA"), ["$.nodes[2].detectors[2]"]],
    ["duplicate rule id", (l) => (l.rulebook.rules[1].id = "main-approach"), ["$.rulebook.rules[1].id"]],
    ["pass at unknown detector", (l) => (l.rulebook.rules[0].on = { pass: "XX" }), ["$.rulebook.rules[0].on.pass"]],
    ["quiet at unknown detector", (l) => (l.rulebook.rules[0].on = { quiet: "XX", ms: 5000 }), ["$.rulebook.rules[0].on.quiet"]],
    ["undeclared counter in an action", (l) => (l.rulebook.rules[0].do[0].add = "mainApproch"), ["$.rulebook.rules[0].do[0].add"]],
    ["undeclared counter in a condition", (l) => (l.rulebook.rules[9].if.all[1].count = "junktion"), ["$.rulebook.rules[9].if.all[1].count"]],
    ["undeclared latch in a condition", (l) => (l.rulebook.rules[0].if = { latch: "shuntLock" }), ["$.rulebook.rules[0].if.latch"]],
    ["undeclared latch in an action", (l) => l.rulebook.rules[0].do.push({ set: "shuntLock" }), ["$.rulebook.rules[0].do[1].set"]],
    ["undeclared latch in clear", (l) => l.rulebook.rules[0].do.push({ clear: "shuntLock" }), ["$.rulebook.rules[0].do[1].clear"]],
    ["undeclared counter in zero", (l) => l.rulebook.rules[0].do.push({ zero: "axles" }), ["$.rulebook.rules[0].do[1].zero"]],
    ["undeclared selector in a condition", (l) => (l.rulebook.rules[9].if.all[0].selector = "road"), ["$.rulebook.rules[9].if.all[0].selector"]],
    ["undeclared selector in an action", (l) => (l.rulebook.rules[9].do[0].select = "road"), ["$.rulebook.rules[9].do[0].select"]],
    ["selector value not in list (condition)", (l) => (l.rulebook.rules[9].if.all[0].is = "quarry"), ["$.rulebook.rules[9].if.all[0].is"]],
    ["selector value not in list (action)", (l) => (l.rulebook.rules[9].do[0].value = "quarry"), ["$.rulebook.rules[9].do[0].value"]],
    ["selector initial not in list", (l) => (l.rulebook.selectors.route.initial = "quarry"), ["$.rulebook.selectors.route.initial"]],
    ["show on unknown signal", (l) => (l.rulebook.rules[9].do[1].show = "M9"), ["$.rulebook.rules[9].do[1].show"]],
    ["aspect condition on unknown signal", (l) => (l.rulebook.rules[7].if.all[2].aspect = "M9"), ["$.rulebook.rules[7].if.all[2].aspect"]],
    ["initial aspect of unknown signal", (l) => (l.rulebook.initial.M9 = "danger"), ["$.rulebook.initial.M9"]],
    ["aspect the signal cannot show", (l) => (l.rulebook.rules[9].do[1].aspect = "caution"), ["$.rulebook.rules[9].do[1].aspect"]],
    ["initial aspect the signal cannot show", (l) => (l.rulebook.initial.M1 = "caution"), ["$.rulebook.initial.M1"]],
    ["alarm in a standing rule", (l) => l.rulebook.rules[9].do.push({ alarm: "main given" }), ["$.rulebook.rules[9].do[2].alarm"]],
    ["proving: unknown signal", (l) => (l.rulebook.proving.routes[0].signal = "M9"), ["$.rulebook.proving.routes[0].signal"]],
    ["proving: unknown detectors", (l) => {
      l.rulebook.proving.routes[1].approach = ["QA"];
      l.rulebook.proving.routes[1].exit = ["JX", "QX"];
    }, ["$.rulebook.proving.routes[1].approach[0]", "$.rulebook.proving.routes[1].exit[1]"]],
    ["proving: unknown entry", (l) => (l.rulebook.proving.routes[0].entry = "QE"), ["$.rulebook.proving.routes[0].entry"]],
    ["proving: duplicate route", (l) => (l.rulebook.proving.routes[1].id = "main"), [
      "$.rulebook.proving.routes[1].id",
      "$.rulebook.proving.conflicts[0][1]",
    ]],
    ["proving: conflict with unknown route", (l) => (l.rulebook.proving.conflicts = [["main", "quarry"]]), ["$.rulebook.proving.conflicts[0][1]"]],
    ["proving: unknown priority", (l) => (l.rulebook.proving.priority = "quarry"), ["$.rulebook.proving.priority"]],
  ];

  it.each(broken)("refuses %s with the exact path", (_name, breakIt, paths) => {
    const layout = kestrel();
    breakIt(layout);
    expect(errorPaths(layout)).toEqual(paths);
  });

  it("lists every semantic error, not only the first", () => {
    const layout = kestrel();
    layout.detectors[1].line = "tramway";
    layout.nodes[2].detectors.push("MA");
    layout.rulebook.rules[0].on = { pass: "XX" };
    layout.rulebook.rules[9].do[1].aspect = "caution";
    layout.rulebook.rules[9].do.push({ alarm: "no" });
    layout.rulebook.proving.priority = "quarry";
    expect(errorPaths(layout)).toEqual([
      "$.detectors[1].line",
      "$.nodes[2].detectors[2]",
      "$.rulebook.rules[0].on.pass",
      "$.rulebook.rules[9].do[1].aspect",
      "$.rulebook.rules[9].do[2].alarm",
      "$.rulebook.proving.priority",
    ]);
  });

  it("lists every shape error, not only the first", () => {
    const layout = kestrel();
    layout.slug = "";
    layout.signals[0].aspects = ["green"];
    layout.rulebook.rules[9].do[1].aspect = "amber";
    expect(errorPaths(layout)).toEqual(["$.slug", "$.signals[0].aspects[0]", "$.rulebook.rules[9].do[1].aspect"]);
  });

  it("gives readable messages", () => {
    const layout = kestrel();
    layout.rulebook.rules[9].do[1].aspect = "caution";
    const result = validateLayoutFile(layout);
    expect(result.ok).toBe(false);
    if (!result.ok) expect(result.errors[0].message).toBe('signal "M1" cannot show caution (it shows danger, clear)');
  });

  it("refuses things that are not layouts at all", () => {
    expect(errorPaths(null)).toEqual(["$"]);
    expect(errorPaths("kestrel")).toEqual(["$"]);
  });
});

describe("validateRulebookFile", () => {
  const rulebook = (): Json => kestrel().rulebook;
  const context = {
    detectors: ["MA", "ME", "BA", "BE", "JX"],
    signals: [
      { id: "M1", aspects: ["danger", "clear"] as ("danger" | "clear")[] },
      { id: "B1", aspects: ["danger", "caution", "clear"] as ("danger" | "caution" | "clear")[] },
    ],
  };

  it("accepts the Kestrel Bank rulebook with and without its layout", () => {
    expect(validateRulebookFile(rulebook()).ok).toBe(true);
    expect(validateRulebookFile(rulebook(), context).ok).toBe(true);
  });

  it("uses paths from the rulebook's own root", () => {
    const file = rulebook();
    file.rules[9].do[1].aspect = "green";
    const result = validateRulebookFile(file);
    expect(result.ok ? [] : result.errors.map((e) => e.path)).toEqual(["$.rules[9].do[1].aspect"]);
  });

  it("without a layout, knows the signals the rulebook mentions and does not check aspect lists", () => {
    const file = rulebook();
    file.rules[9].do[1].aspect = "caution";
    file.rules[0].on = { pass: "ANYWHERE" };
    expect(validateRulebookFile(file).ok).toBe(true);
    const checked = validateRulebookFile(file, context);
    expect(checked.ok ? [] : checked.errors.map((e) => e.path)).toEqual(["$.rules[0].on.pass", "$.rules[9].do[1].aspect"]);
  });

  it("without a layout, a proving route naming a signal the rules never mention is refused", () => {
    const file = rulebook();
    file.proving.routes[0].signal = "M7";
    const result = validateRulebookFile(file);
    expect(result.ok ? [] : result.errors.map((e) => e.path)).toEqual(["$.proving.routes[0].signal"]);
  });
});

describe("toJsonPath", () => {
  it.each([
    [[], "$"],
    [["rules", 2, "do", 0, "aspect"], "$.rules[2].do[0].aspect"],
    [["initial", "M-1"], '$.initial["M-1"]'],
  ] as [PropertyKey[], string][])("%j → %s", (segments, path) => {
    expect(toJsonPath(segments)).toBe(path);
  });
});
