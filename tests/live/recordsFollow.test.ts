/**
 * Records saved on the workbench reach the running layout without a restart (real broker,
 * PostgreSQL, server and a reference board on the Kestrel Bank demo): a signal added to the
 * records gets a retained danger aspect at once, one removed again has its retained aspect
 * cleared, a detector added to a board is accepted — and the pulses a board sends while the
 * records change are each stored exactly once.
 */
import mqtt, { type MqttClient } from "mqtt";
import { QueryTypes } from "sequelize";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { topics } from "@shared/contract/live";
import { connectBoard, issueBoardSecrets, KESTREL_BOARDS, SERVER_MQTT_USERNAME, startLiveHarness, waitFor, type Board, type LiveHarness } from "../support/live";
import { layoutRecords } from "../support/layoutRecords";
import { startTestApp, type TestApp } from "../support/testApp";

const SLUG = "kestrel-bank";
type Agent = Awaited<ReturnType<TestApp["signIn"]>>;

describe("records saved while a layout runs", () => {
  let t: TestApp;
  let h: LiveHarness;
  let engineer: Agent;
  let board: Board;
  const observers: MqttClient[] = [];

  /** A client that watches the layout's retained signal topics, as a board starting now would see them. */
  const observe = async () => {
    const client = await mqtt.connectAsync(h.mqttUrl, {
      protocolVersion: 4,
      clientId: `blocklight-server.observer-${observers.length}`,
      clean: true,
      username: SERVER_MQTT_USERNAME,
      password: h.serverPassword,
      reconnectPeriod: 0,
    });
    observers.push(client);
    const seen = new Map<string, string>();
    client.on("message", (topic, payload) => seen.set(topic, payload.toString("utf8")));
    await client.subscribeAsync(`blocklight/v1/${SLUG}/signal/#`, { qos: 1 });
    return seen;
  };
  const { save } = layoutRecords(() => engineer, SLUG);
  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => t.deps.db.sequelize.query<T>(sql, { type: QueryTypes.SELECT, replacements });

  beforeAll(async () => {
    t = await startTestApp();
    h = await startLiveHarness(t);
    engineer = await t.signIn("engineer");
    const secrets = await issueBoardSecrets(t, SLUG, Object.values(KESTREL_BOARDS));
    board = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!, { boot: "follow01" });
  });
  afterAll(async () => {
    for (const client of observers) await client.endAsync();
    await board?.end();
    await h?.close();
    await t?.close();
  });

  it("a new signal is commanded to danger at once, without losing or repeating the pulses sent meanwhile", async () => {
    const watching = await observe();
    const m2 = topics.aspect(SLUG, "M2");
    const pulses = 60;
    const sending = (async () => {
      for (let i = 0; i < pulses; i++) await board.pulse("MA");
    })();
    await save((r) => {
      r.signals.push({ id: "M2", name: "Main starter", line: "main", at: 16, aspects: ["danger", "clear"] });
      r.nodes.find((n) => n.id === "junction")!.signals.push("M2");
    });
    await waitFor(() => watching.has(m2), "the new signal's aspect at the broker");
    expect(JSON.parse(watching.get(m2)!)).toMatchObject({ aspect: "danger" });
    await sending;
    await board.board.whenCovered();
    await waitFor(async () => (await q(`SELECT 1 FROM events WHERE node_id = 'bank-foot' AND boot = 'follow01'`)).length >= pulses, "every pulse stored");
    await h.runtime.idle();
    const stored = await q<{ seq: string; status: string }>(`SELECT seq, status FROM events WHERE node_id = 'bank-foot' AND boot = 'follow01' ORDER BY seq`);
    expect(stored.map((e) => Number(e.seq))).toEqual(Array.from({ length: pulses }, (_, i) => i + 1));
    expect(new Set(stored.map((e) => e.status))).toEqual(new Set(["accepted"]));

    // Retained: a board that starts now is told too, with a rev above every earlier command.
    const later = await observe();
    await waitFor(() => later.has(m2) && later.has(topics.aspect(SLUG, "M1")), "the retained aspects at a later client");
    expect(JSON.parse(later.get(m2)!).aspect).toBe("danger");
  });

  it("a removed signal's retained aspect is cleared; a new detector on a board is accepted", async () => {
    const watching = await observe();
    const m2 = topics.aspect(SLUG, "M2");
    await waitFor(() => watching.has(m2), "the retained M2 before the removal");
    await save((r) => {
      r.signals = r.signals.filter((s) => s.id !== "M2");
      const junction = r.nodes.find((n) => n.id === "junction")!;
      junction.signals = junction.signals.filter((s) => s !== "M2");
      r.detectors.push({ id: "MZ", name: "Main spur", line: "main", at: 2 });
      r.nodes.find((n) => n.id === "bank-foot")!.detectors.push("MZ");
    });
    await waitFor(() => watching.get(m2) === "", "the empty retained message that clears M2");
    const later = await observe();
    await waitFor(() => later.has(topics.aspect(SLUG, "M1")), "the retained aspects at a later client");
    expect(later.has(m2)).toBe(false);

    await board.pulse("MZ");
    await waitFor(async () => (await q(`SELECT 1 FROM events WHERE node_id = 'bank-foot' AND detector = 'MZ'`)).length > 0, "the MZ pulse stored");
    const [mz] = await q<{ status: string }>(`SELECT status FROM events WHERE node_id = 'bank-foot' AND boot = 'follow01' ORDER BY seq DESC LIMIT 1`);
    expect(mz.status).toBe("accepted");
  });
});
