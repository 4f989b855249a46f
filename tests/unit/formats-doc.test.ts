/**
 * docs/formats.md's complete example must stay a valid, provable Fernmoor file, written in the
 * canonical key order the page describes.
 */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { canonicalLayout } from "@shared/layout/canonical";
import { prove } from "@shared/rulebook/prove";
import { validateLayoutFile } from "@shared/rulebook/validate";

function docExample(): unknown {
  const text = readFileSync(new URL("../../docs/formats.md", import.meta.url), "utf8");
  const section = text.slice(text.indexOf("## A complete example"));
  const block = /```json\n([\s\S]*?)\n```/.exec(section);
  if (!block) throw new Error("docs/formats.md has no json block under 'A complete example'");
  return JSON.parse(block[1]);
}

describe("docs/formats.md", () => {
  it("has a complete example that parses and validates as a layout file", () => {
    const result = validateLayoutFile(docExample());
    expect(result.ok ? [] : result.errors).toEqual([]);
  });

  it("writes the example in the canonical key order", () => {
    const example = docExample();
    expect(JSON.stringify(canonicalLayout(example))).toBe(JSON.stringify(example));
  });

  it("has an example whose rulebook proves", () => {
    const result = validateLayoutFile(docExample());
    if (!result.ok) throw new Error("invalid example");
    const proof = prove(result.layout.rulebook);
    expect(proof.properties.filter((p) => p.holds !== true)).toEqual([]);
    expect(proof.verdict).toBe("proved");
  });
});
