/**
 * Issue 10: "a live.update subscriber that throws: the layout went into fail-safe and stayed
 * there; an unhandled rejection escaped". With real broker, PostgreSQL and boards.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { Bus, type BusLogger } from "../../server/bus";
import { startTestApp, type TestApp } from "../support/testApp";
import { connectBoard, issueBoardSecrets, KESTREL_BOARDS, startLiveHarness, waitFor, type LiveHarness } from "../support/live";

const SLUG = "kestrel-bank";

describe("a broken bus subscriber does not fault the layout", () => {
  let t: TestApp;
  let h: LiveHarness;
  let secrets = new Map<string, string>();
  const logged: { fields: Record<string, unknown>; message: string }[] = [];
  const unhandled: unknown[] = [];
  const onUnhandled = (reason: unknown) => unhandled.push(reason);

  beforeAll(async () => {
    const logger: BusLogger = { error: (fields, message) => logged.push({ fields: fields as Record<string, unknown>, message }) };
    t = await startTestApp({ deps: { bus: new Bus(logger) } });
    h = await startLiveHarness(t);
    secrets = await issueBoardSecrets(t, SLUG, Object.values(KESTREL_BOARDS));
    process.on("unhandledRejection", onUnhandled);
  });
  afterAll(async () => {
    process.off("unhandledRejection", onUnhandled);
    await h?.close();
    await t?.close();
  });

  it("a throwing and a rejecting live.update listener are logged by owner; the signal still clears", async () => {
    t.deps.bus.on("live.update", () => {
      throw new Error("push failed");
    }, "broken-sync");
    t.deps.bus.on("live.update", async () => {
      throw new Error("push failed later");
    }, "broken-async");

    const bankFoot = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!, { boot: "bus001" });
    const junction = await connectBoard(h.mqttUrl, SLUG, "junction", secrets.get("junction")!, { subscribe: true });
    await bankFoot.pulse("MA");
    await bankFoot.pulse("MA");
    await waitFor(() => junction.aspects.get("M1")?.aspect === "clear", "M1 clear at the junction board");
    await h.runtime.idle();

    const viewer = await t.signIn("viewer");
    const live = await viewer.get(`/api/layouts/${SLUG}/live`);
    expect(live.status).toBe(200);
    expect(live.body.faulted).toBeNull();
    expect(live.body.shown.M1).toBe("clear");

    expect(logged.some((l) => l.fields.owner === "broken-sync" && l.fields.event === "live.update")).toBe(true);
    expect(logged.some((l) => l.fields.owner === "broken-async" && l.fields.event === "live.update")).toBe(true);
    expect(unhandled).toEqual([]);

    t.deps.bus.removeOwner("broken-sync");
    t.deps.bus.removeOwner("broken-async");
    await Promise.all([bankFoot.end(), junction.end()]);
  });
});
