import { describe, expect, it } from "vitest";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { canonicalLayout } from "@shared/layout/canonical";
import { canonicalRulebook } from "@shared/rulebook/canonical";
import { unfinishedAdvice, unfinishedReason } from "@shared/rulebook/proofAdvice";

const reversed = <T extends object>(value: T): T => Object.fromEntries(Object.entries(value).reverse()) as T;

describe("canonical key order", () => {
  it("writes a rulebook as format, declarations, rules, proving; a rule as id, note, on, if, do; terms name first", () => {
    const rulebook = kestrelBankLayout().rulebook;
    const scrambled = reversed({ ...rulebook, rules: rulebook.rules.map((rule) => reversed({ ...rule, do: rule.do.map(reversed) })) });
    const out = canonicalRulebook(scrambled);
    expect(Object.keys(out)).toEqual(["format", "latches", "counters", "selectors", "initial", "rules", "proving"]);
    const give = out.rules.find((r) => r.id === "give-main")!;
    expect(Object.keys(give)).toEqual(["id", "note", "on", "if", "do"]);
    expect(give.do.map((a) => Object.keys(a))).toEqual([["select", "value"], ["show", "aspect"]]);
    expect(Object.keys(out.proving!)).toEqual(["routes", "conflicts", "priority", "maxAxles", "maxTrainsPerRoute"]);
    expect(Object.keys(out.proving!.routes[0])).toEqual(["id", "signal", "approach", "entry", "exit"]);
    expect(JSON.parse(JSON.stringify(out))).toEqual(JSON.parse(JSON.stringify(rulebook)));
  });

  it.each([
    [{ count: "junction", op: "==", value: 0 }, ["count", "op", "value"]],
    [{ is: "none", selector: "route" }, ["selector", "is"]],
    [{ is: "danger", aspect: "M1" }, ["aspect", "is"]],
    [{ lies: "reverse", points: "P1" }, ["points", "lies"]],
    [{ by: -1, add: "junction" }, ["add", "by"]],
    [{ to: "reverse", throw: "P1" }, ["throw", "to"]],
    [{ ms: 500, quiet: "MA" }, ["quiet", "ms"]],
  ])("puts the naming key first in %j", (term, keys) => {
    const out = canonicalRulebook({ format: "blocklight.rulebook/1", rules: [{ do: [term], on: term, if: { not: term }, id: "r" }] });
    expect(Object.keys(out.rules[0].do[0])).toEqual(keys);
    expect(Object.keys(out.rules[0].on)).toEqual(keys);
    expect(Object.keys((out.rules[0].if as { not: object }).not)).toEqual(keys);
  });

  it("keeps the author's order of declared names and unknown keys after the known ones", () => {
    const out = canonicalRulebook({ rules: [], counters: { zebra: 0, alpha: 0 }, extra: 1, format: "blocklight.rulebook/1" });
    expect(Object.keys(out)).toEqual(["format", "counters", "rules", "extra"]);
    expect(Object.keys(out.counters)).toEqual(["zebra", "alpha"]);
  });

  it("writes a layout file in the contract's order, records id and name first", () => {
    const file = kestrelBankLayout();
    const out = canonicalLayout(reversed({ ...file, detectors: file.detectors.map(reversed), scale: reversed(file.scale) }));
    expect(Object.keys(out)).toEqual(["format", "slug", "name", "scale", "lines", "detectors", "signals", "points", "nodes", "schematic", "rulebook"]);
    expect(Object.keys(out.detectors[0])).toEqual(["id", "name", "line", "at"]);
    expect(Object.keys(out.scale)).toEqual(["name", "ratio"]);
  });
});

describe("advice for an unfinished proof", () => {
  it.each([
    [{ maxAxles: 4, maxTrainsPerRoute: 2 }, /reduce proving\.maxAxles \(now 4\) or proving\.maxTrainsPerRoute \(now 2\)/],
    [{ maxAxles: 1, maxTrainsPerRoute: 3 }, /^reduce proving\.maxTrainsPerRoute \(now 3\) and prove again$/],
    [{ maxAxles: 1, maxTrainsPerRoute: 1 }, /already 1/],
  ])("for %j says which setting to reduce", (proving, expected) => {
    expect(unfinishedAdvice(proving)).toMatch(expected);
  });

  it("adds the advice to a limit reason but not to a cancellation", () => {
    expect(unfinishedReason("state limit of 5000000 reached", { maxAxles: 3, maxTrainsPerRoute: 2 })).toBe(
      "state limit of 5000000 reached: reduce proving.maxAxles (now 3) or proving.maxTrainsPerRoute (now 2) and prove again",
    );
    expect(unfinishedReason("cancelled by Fernmoor Signal Engineer", { maxAxles: 3, maxTrainsPerRoute: 2 })).toBe("cancelled by Fernmoor Signal Engineer");
  });
});
