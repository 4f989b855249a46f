import { describe, expect, it } from "vitest";
import { kestrelBankLayout } from "@shared/demo/fernmoor";
import { validateLayoutFile, validateRulebookFile } from "@shared/rulebook/validate";

/** A file with both shape and cross-reference mistakes lists them all in one answer. */
describe("validation lists shape and cross-reference errors together", () => {
  it.each([
    [
      "empty detector name + unknown counter in a rule",
      (f: any) => {
        f.detectors[0].name = "";
        f.rulebook.rules[0].do = [{ add: "noSuchCounter", by: 1 }];
      },
      ["$.detectors[0].name", "$.rulebook.rules[0].do[0].add"],
    ],
    [
      "malformed rule + signal on an unknown line",
      (f: any) => {
        f.rulebook.rules[1].on = { passes: "MA" };
        f.signals[0].line = "nowhere";
      },
      ["$.rulebook.rules[1].on", "$.signals[0].line"],
    ],
    [
      "bad format tag + duplicate line id",
      (f: any) => {
        f.format = "something-else";
        f.lines.push({ ...f.lines[0] });
      },
      ["$.format", `$.lines[${kestrelBankLayout().lines.length}].id`],
    ],
  ])("%s", (_name, mutate, expected) => {
    const file = structuredClone(kestrelBankLayout()) as any;
    mutate(file);
    const result = validateLayoutFile(file);
    expect(result.ok).toBe(false);
    if (result.ok) return;
    const paths = result.errors.map((e) => e.path);
    for (const p of expected) expect(paths.some((got) => got === p || got.startsWith(p)), `${p} in ${paths.join(", ")}`).toBe(true);
    expect(result.errors.every((e) => !e.message.includes("__salvaged_"))).toBe(true);
  });

  it("a sound file still passes", () => {
    expect(validateLayoutFile(kestrelBankLayout()).ok).toBe(true);
  });

  it("a rulebook with a malformed rule also reports an undeclared latch elsewhere", () => {
    const rb = structuredClone(kestrelBankLayout().rulebook) as any;
    rb.rules[0].if = { latch: 3 };
    rb.rules[1].do = [{ set: "ghostLatch" }];
    const result = validateRulebookFile(rb);
    expect(result.ok).toBe(false);
    if (result.ok) return;
    const paths = result.errors.map((e) => e.path);
    expect(paths.some((p) => p.startsWith("$.rules[0].if"))).toBe(true);
    expect(paths.some((p) => p.startsWith("$.rules[1].do[0]"))).toBe(true);
  });

  it("a list over its bound is one error: nothing referring into it is reported unknown", () => {
    const file = structuredClone(kestrelBankLayout());
    // 501 detectors: the list is too long, so the nodes' and the rulebook's detector names cannot be checked.
    file.detectors = Array.from({ length: 501 }, (_, i) => ({ id: `D${i}`, name: `Detector ${i}`, line: "main", at: i / 10 }));
    // 501 lines: every detector, signal and points would otherwise be on an "unknown line".
    file.lines = Array.from({ length: 501 }, (_, i) => ({ id: `L${i}`, name: `Line ${i}` }));
    file.rulebook.rules[1].do = [{ set: "ghostLatch" }];
    const result = validateLayoutFile(file);
    expect(result.ok).toBe(false);
    if (result.ok) return;
    expect(result.errors.map((e) => e.path)).toEqual(["$.lines", "$.detectors", "$.rulebook.rules[1].do[0].set"]);
  });
});
