/**
 * The typed bus isolates its subscribers (STYLE.md: a bus that guards its listeners and
 * removes them by owner).
 */
import { afterEach, beforeEach, describe, expect, it } from "vitest";
import { Bus, type BusLogger } from "../../server/bus";
import { waitFor } from "../support/waitFor";

const published = { layoutId: 1, slug: "kestrel-bank", version: 2 };

function capturingLogger() {
  const lines: { fields: Record<string, unknown>; message: string }[] = [];
  const logger: BusLogger = { error: (fields, message) => lines.push({ fields: fields as Record<string, unknown>, message }) };
  return { logger, lines };
}

describe("bus", () => {
  const unhandled: unknown[] = [];
  const onUnhandled = (reason: unknown) => unhandled.push(reason);
  beforeEach(() => {
    unhandled.length = 0;
    process.on("unhandledRejection", onUnhandled);
  });
  afterEach(() => {
    process.off("unhandledRejection", onUnhandled);
  });

  it.each([
    ["throws", () => {
      throw new Error("listener broke");
    }],
    ["rejects", async () => {
      throw new Error("listener broke");
    }],
  ])("a listener that %s is logged with its owner and the later listeners still run", async (_what, broken) => {
    const { logger, lines } = capturingLogger();
    const bus = new Bus(logger);
    const seen: string[] = [];
    bus.on("rulebook.published", () => void seen.push("first"), "first-owner");
    bus.on("rulebook.published", broken, "mimic-push");
    bus.on("rulebook.published", (e) => void seen.push(`last:${e.slug}`), "last-owner");

    expect(() => bus.emit("rulebook.published", published)).not.toThrow();
    await waitFor(() => lines.length > 0, "the broken listener's log line");
    await new Promise((resolve) => setImmediate(resolve)); // one more turn: an unhandled rejection would be reported by now

    expect(seen).toEqual(["first", "last:kestrel-bank"]);
    expect(lines).toHaveLength(1);
    expect(lines[0].fields).toMatchObject({ owner: "mimic-push", event: "rulebook.published" });
    expect(lines[0].message).toContain("mimic-push");
    expect((lines[0].fields.err as Error).message).toBe("listener broke");
    expect(unhandled).toEqual([]);
  });

  it("removeOwner removes every listener of that owner, on every event, and no other", () => {
    const bus = new Bus(capturingLogger().logger);
    const calls: string[] = [];
    bus.on("rulebook.published", () => void calls.push("a:published"), "a");
    bus.on("layout.nodes-changed", () => void calls.push("a:nodes"), "a");
    bus.on("rulebook.published", () => void calls.push("b:published"), "b");
    expect(bus.listenerCount("rulebook.published", "a")).toBe(1);

    bus.removeOwner("a");
    bus.emit("rulebook.published", published);
    bus.emit("layout.nodes-changed", { layoutId: 1, slug: "kestrel-bank" });

    expect(calls).toEqual(["b:published"]);
    expect(bus.listenerCount("rulebook.published")).toBe(1);
    expect(bus.listenerCount("layout.nodes-changed")).toBe(0);
  });

  it("on/off/emit keep working for callers without an owner", () => {
    const bus = new Bus(capturingLogger().logger);
    const calls: number[] = [];
    const listener = (e: { version: number }) => void calls.push(e.version);
    bus.on("rulebook.published", listener);
    expect(bus.emit("rulebook.published", published)).toBe(true);
    bus.off("rulebook.published", listener);
    expect(bus.emit("rulebook.published", published)).toBe(false);
    expect(calls).toEqual([2]);
  });

  it("a listener that removes its owner during an emit does not make the next listener be skipped", () => {
    const bus = new Bus(capturingLogger().logger);
    const calls: string[] = [];
    bus.on("rulebook.published", () => {
      calls.push("once");
      bus.removeOwner("once");
    }, "once");
    bus.on("rulebook.published", () => void calls.push("after"), "after");
    bus.emit("rulebook.published", published);
    bus.emit("rulebook.published", published);
    expect(calls).toEqual(["once", "after", "after"]);
  });
});
