import { describe, expect, it } from "vitest";
import { ingestMessage, parseNodeTopic, type NodeEntry } from "../../server/runtime/ingest";

const nodes = new Map<string, NodeEntry>([
  ["bank-foot", { detectors: new Set(["MA"]), signals: new Set(), points: new Set() }],
  ["junction", { detectors: new Set(["ME", "JX"]), signals: new Set(["M1"]) }],
]);
const directory = (slug: string) => (slug === "kestrel-bank" ? nodes : undefined);
const topic = (node: string, kind: string) => `blocklight/v1/kestrel-bank/node/${node}/${kind}`;
const bytes = (value: unknown) => Buffer.from(typeof value === "string" ? value : JSON.stringify(value));

describe("ingestMessage (CONTRACT.md §2)", () => {
  it.each([
    ["a pulse", topic("bank-foot", "pulse"), { detector: "MA", seq: 17, boot: "9f2c1a", t: 52311 }, "pulse"],
    ["a pulse without t", topic("bank-foot", "pulse"), { detector: "MA", seq: 1, boot: "9f2c1a" }, "pulse"],
    ["a status", topic("junction", "status"), { online: true, boot: "9f2c1a", fw: "1.4.0" }, "status"],
    ["a Last Will", topic("junction", "status"), { online: false }, "status"],
    ["a lamp-proving report", topic("junction", "shown"), { signal: "M1", aspect: "clear", rev: 42 }, "shown"],
    ["a dark lamp", topic("junction", "shown"), { signal: "M1", aspect: "dark", rev: 42 }, "shown"],
  ])("accepts %s", (_name, t, payload, kind) => {
    const result = ingestMessage(t, bytes(payload), directory);
    expect(result.ok && result.kind).toBe(kind);
  });

  it.each([
    ["malformed JSON", topic("bank-foot", "pulse"), "{oops", /malformed JSON/, false],
    ["a payload over 1 KiB", topic("bank-foot", "pulse"), { detector: "MA", seq: 1, boot: "b".repeat(1100) }, /over 1024 bytes/, false],
    ["seq 0", topic("bank-foot", "pulse"), { detector: "MA", seq: 0, boot: "x" }, /invalid pulse/, false],
    ["a fractional seq", topic("bank-foot", "pulse"), { detector: "MA", seq: 1.5, boot: "x" }, /invalid pulse/, false],
    ["an unknown field", topic("bank-foot", "pulse"), { detector: "MA", seq: 1, boot: "x", speed: 3 }, /invalid pulse/, false],
    ["an unserved detector", topic("bank-foot", "pulse"), { detector: "ME", seq: 1, boot: "x" }, /not served by node "bank-foot"/, true],
    ["an unknown node", topic("stranger", "pulse"), { detector: "MA", seq: 1, boot: "x" }, /unknown node "stranger"/, true],
    ["an unknown layout", "blocklight/v1/elsewhere/node/bank-foot/pulse", { detector: "MA", seq: 1, boot: "x" }, /unknown layout/, false],
    ["an unknown kind", topic("bank-foot", "chatter"), {}, /wrong topic shape/, false],
    ["a topic one level too deep", `${topic("bank-foot", "pulse")}/extra`, {}, /wrong topic shape/, false],
    ["unreported points", topic("bank-foot", "points"), { points: "P1", lies: "normal", seq: 1, boot: "x" }, /points "P1" are not reported by node "bank-foot"/, true],
    ["a status from an unknown node", topic("stranger", "status"), { online: true }, /unknown node "stranger"/, true],
    ["an unserved signal", topic("bank-foot", "shown"), { signal: "M1", aspect: "clear", rev: 1 }, /not served/, true],
    ["an aspect outside the contract", topic("junction", "shown"), { signal: "M1", aspect: "green", rev: 1 }, /invalid lamp-proving/, false],
  ])("rejects %s with a reason", (_name, t, payload, reason, byDirectory) => {
    const result = ingestMessage(t, bytes(payload), directory);
    expect(result.ok).toBe(false);
    if (!result.ok) expect(result.reason).toMatch(reason);
    // Only these may wait for records being saved (server/runtime/recordsHold.ts).
    if (!result.ok) expect(result.directory ?? false).toBe(byDirectory);
  });

  it("keeps what it could read from a refused pulse for the log", () => {
    const result = ingestMessage(topic("bank-foot", "pulse"), bytes({ detector: "ME", seq: 4, boot: "b1" }), directory);
    expect(result).toMatchObject({ ok: false, slug: "kestrel-bank", node: "bank-foot", kind: "pulse", detector: "ME", seq: 4, boot: "b1" });
  });

  it.each([
    ["blocklight/v1/kestrel-bank/node/junction/pulse", { slug: "kestrel-bank", node: "junction", suffix: "pulse" }],
    ["blocklight/v1/kestrel-bank/signal/M1/aspect", null],
    ["blocklight/v2/kestrel-bank/node/junction/pulse", null],
    ["blocklight/v1/kestrel-bank/node/bad id!/pulse", null],
  ])("parseNodeTopic(%s)", (t, expected) => {
    expect(parseNodeTopic(t)).toEqual(expected);
  });
});
