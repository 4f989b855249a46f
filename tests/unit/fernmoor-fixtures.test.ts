import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { kestrelBankLayout, wrenfoldLoopLayout } from "../../shared/demo/fernmoor";
import { validateLayoutFile } from "../../shared/rulebook/validate";

const fixture = (name: string): unknown => JSON.parse(readFileSync(new URL(`../fixtures/${name}`, import.meta.url), "utf8"));

describe("Fernmoor demo fixtures", () => {
  it.each([
    ["kestrel-bank.layout.json", kestrelBankLayout],
    ["wrenfold-loop.layout.json", wrenfoldLoopLayout],
  ])("%s equals the demo function's output and validates", (name, make) => {
    const file = fixture(name);
    // To refresh after a deliberate change: write JSON.stringify(make(), null, 2) + "\n" to the fixture.
    expect(file).toEqual(JSON.parse(JSON.stringify(make())));
    expect(validateLayoutFile(file).ok).toBe(true);
  });

  it("places approach detectors about 10 m before their signal, entry level with it", () => {
    const layout = kestrelBankLayout();
    const at = (id: string) => [...layout.detectors, ...layout.signals].find((item) => item.id === id)!.at;
    expect(at("M1") - at("MA")).toBeCloseTo(10);
    expect(at("B1") - at("BA")).toBeCloseTo(10);
    expect(at("ME")).toBe(at("M1"));
    expect(at("JX")).toBeGreaterThan(layout.points[0].at);
  });
});
