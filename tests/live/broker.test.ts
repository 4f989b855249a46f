/**
 * The broker's side of CONTRACT.md §2 (revision 2) with real mqtt.js clients: client ids bound
 * to identities (no session takeover), the board ACLs, the packet size limit, fast secret
 * checks that still accept hashes issued before, and connect attempts limited per address.
 */
import bcrypt from "bcryptjs";
import mqtt, { type IClientOptions, type MqttClient } from "mqtt";
import { QueryTypes } from "sequelize";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startBroker, type BrokerIdentity, type BrokerRefusal } from "../../broker/server";
import { startTestApp, type TestApp } from "../support/testApp";
import { connectBoard, issueBoardSecrets, KESTREL_BOARDS, SERVER_MQTT_USERNAME, startLiveHarness, waitFor, type LiveHarness } from "../support/live";

const SLUG = "kestrel-bank";
const OTHER = "wrenfold-loop";
const root = (layout: string) => `blocklight/v1/${layout}`;

type Attempt = { ok: true; client: MqttClient } | { ok: false; code: number | undefined; message: string };

/** One connect attempt, no retries: the client on success, CONNACK's return code otherwise. */
function attempt(url: string, options: IClientOptions): Promise<Attempt> {
  return new Promise((resolve) => {
    const client = mqtt.connect(url, { protocolVersion: 4, reconnectPeriod: 0, connectTimeout: 5_000, ...options });
    client.once("connect", () => resolve({ ok: true, client }));
    client.once("error", (err) => {
      client.end(true);
      resolve({ ok: false, code: (err as { code?: number }).code, message: err.message });
    });
    client.once("close", () => resolve({ ok: false, code: undefined, message: "closed" }));
  });
}

describe("broker: identities, access rules and limits", () => {
  let t: TestApp;
  let h: LiveHarness;
  let secrets = new Map<string, string>();
  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
    t.deps.db.sequelize.query<T>(sql, { type: QueryTypes.SELECT, replacements });
  const pulsesStored = async () => (await q<{ n: number }>(`SELECT count(*)::int AS n FROM events WHERE kind = 'pulse'`))[0].n;

  beforeAll(async () => {
    t = await startTestApp();
    h = await startLiveHarness(t);
    secrets = await issueBoardSecrets(t, SLUG, Object.values(KESTREL_BOARDS));
    for (const [id, secret] of await issueBoardSecrets(t, OTHER, [["wrenfold-home", ["WA", "WE"], ["W1"]]])) secrets.set(id, secret);
  });
  afterAll(async () => {
    await h?.close();
    await t?.close();
  });

  describe("client ids are bound to identities (CONNACK 2 otherwise)", () => {
    it.each([
      ["a board with its own id", "junction", () => secrets.get("junction")!, `${SLUG}.junction`, 0],
      ["a board with a random id", "junction", () => secrets.get("junction")!, "junction-1234", 2],
      ["a board with another board's id", "junction", () => secrets.get("junction")!, `${SLUG}.bank-foot`, 2],
      ["a board with its id under another layout", "junction", () => secrets.get("junction")!, `${OTHER}.junction`, 2],
      ["a board with the server's id", "wrenfold-home", () => secrets.get("wrenfold-home")!, "blocklight-server", 2],
      ["a board with a server id of a layout", "wrenfold-home", () => secrets.get("wrenfold-home")!, `blocklight-server.${SLUG}`, 2],
      ["a board with another reserved id", "junction", () => secrets.get("junction")!, "blocklight-console", 2],
      ["the server's credentials with a board's id", SERVER_MQTT_USERNAME, () => h.serverPassword, `${SLUG}.junction`, 2],
      ["the server's credentials with a random id", SERVER_MQTT_USERNAME, () => h.serverPassword, "mqttjs_abc", 2],
      ["the server's credentials with a per-layout server id", SERVER_MQTT_USERNAME, () => h.serverPassword, "blocklight-server.a-layout-not-running" /* not one the runtime holds: taking that over would drop it */, 0],
    ] as const)("%s", async (_what, username, password, clientId, expected) => {
      const result = await attempt(h.mqttUrl, { username, password: password(), clientId, clean: true });
      if (expected === 0) {
        expect(result.ok).toBe(true);
        if (result.ok) await result.client.endAsync();
      } else {
        expect(result).toMatchObject({ ok: false, code: expected });
      }
    });

    it("a board of another layout cannot take over the server's session: the server keeps receiving pulses", async () => {
      const before = await pulsesStored();
      const attack = await attempt(h.mqttUrl, { username: "wrenfold-home", password: secrets.get("wrenfold-home")!, clientId: "blocklight-server", clean: false });
      expect(attack).toMatchObject({ ok: false, code: 2 });
      expect(h.runtime.connected()).toBe(true);
      const board = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!, { boot: "take01" });
      await board.pulse("MA");
      await waitFor(async () => (await pulsesStored()) === before + 1, "the pulse stored by the server");
      await board.end();
      expect(h.refusals).toContainEqual(expect.objectContaining({ what: "connect", clientId: "blocklight-server", username: "wrenfold-home" }));
    });

    it("a board cannot kick another board off with its client id", async () => {
      const junction = await connectBoard(h.mqttUrl, SLUG, "junction", secrets.get("junction")!);
      let closed = false;
      junction.client.on("close", () => (closed = true));
      const attack = await attempt(h.mqttUrl, { username: "wrenfold-home", password: secrets.get("wrenfold-home")!, clientId: `${SLUG}.junction` });
      expect(attack).toMatchObject({ ok: false, code: 2 });
      // A round trip on the board's own connection after the refusal (a takeover would have come
      // before the broker answered the attacker): the broker still serves it.
      await junction.client.subscribeAsync(`${root(SLUG)}/signal/M1/aspect`, { qos: 1 });
      expect(closed).toBe(false);
      expect(junction.client.connected).toBe(true);
      await junction.end();
    });
  });

  describe("what a board may publish", () => {
    it.each([
      ["its own pulse topic", `${root(SLUG)}/node/junction/pulse`, true],
      ["its own points report", `${root(SLUG)}/node/junction/points`, true],
      ["its own status", `${root(SLUG)}/node/junction/status`, true],
      ["its own applied (the server's confirmation)", `${root(SLUG)}/node/junction/applied`, false],
      ["another board's pulse topic", `${root(SLUG)}/node/bank-foot/pulse`, false],
      ["the same node id on another layout", `${root(OTHER)}/node/junction/pulse`, false],
      ["an aspect command", `${root(SLUG)}/signal/M1/aspect`, false],
      ["a points command", `${root(SLUG)}/points/P1/set`, false],
      ["the server's status", `${root(SLUG)}/server/status`, false],
    ])("%s: allowed %s", async (_what, topic, allowed) => {
      const board = await connectBoard(h.mqttUrl, SLUG, "junction", secrets.get("junction")!);
      let closed = false;
      board.client.on("close", () => (closed = true));
      const payload = JSON.stringify({ online: true });
      if (allowed) {
        await board.publish(topic, payload);
        expect(closed).toBe(false);
        await board.end();
      } else {
        board.client.publish(topic, payload, { qos: 1 });
        await waitFor(() => closed, "the broker to disconnect the board");
        expect(h.refusals).toContainEqual(expect.objectContaining({ what: "publish", topic, clientId: `${SLUG}.junction` }));
        // Stopped, not only its dropped client ended: a reference board left reconnecting would
        // take its client id over from every later junction board of this file.
        await board.end();
      }
    });
  });

  describe("what a board may subscribe to", () => {
    it.each([
      [`${root(SLUG)}/signal/#`, true],
      [`${root(SLUG)}/signal/M1/aspect`, true],
      [`${root(SLUG)}/points/#`, true],
      [`${root(SLUG)}/points/P1/set`, true],
      [`${root(SLUG)}/server/status`, true],
      [`${root(SLUG)}/node/junction/applied`, true],
      [`${root(SLUG)}/node/bank-foot/applied`, false],
      [`${root(SLUG)}/node/+/applied`, false],
      [`${root(SLUG)}/node/#`, false],
      [`${root(SLUG)}/server/#`, false],
      [`${root(SLUG)}/#`, false],
      [`${root(OTHER)}/signal/#`, false],
      [`${root(OTHER)}/server/status`, false],
      ["#", false],
    ])("%s: allowed %s", async (filter, allowed) => {
      const board = await connectBoard(h.mqttUrl, SLUG, "junction", secrets.get("junction")!);
      // mqtt.js rejects a SUBACK failure code (128) as an error.
      const granted = await board.client.subscribeAsync(filter, { qos: 1 }).then(
        (g) => g[0].qos,
        (err: Error) => (/Subscribe error/.test(err.message) ? 128 : Promise.reject(err)),
      );
      expect(granted).toBe(allowed ? 1 : 128);
      if (!allowed) expect(h.refusals).toContainEqual(expect.objectContaining({ what: "subscribe", topic: filter }));
      await board.end();
    });
  });

  describe("packet size", () => {
    it("a 10 MB packet is refused at the broker and the connection closed; other boards carry on", async () => {
      const before = await pulsesStored();
      const board = await connectBoard(h.mqttUrl, SLUG, "junction", secrets.get("junction")!);
      let closed = false;
      board.client.on("close", () => (closed = true));
      board.client.on("error", () => {});
      board.client.publish(`${root(SLUG)}/node/junction/pulse`, Buffer.alloc(10 * 1024 * 1024, 0x61), { qos: 1 });
      await waitFor(() => closed, "the broker to close the connection");
      await board.end(); // stopped: no reconnect (see above)
      expect(h.refusals).toContainEqual(
        expect.objectContaining({ what: "packet", clientId: `${SLUG}.junction`, reason: expect.stringMatching(/over the 4096-byte limit/) }),
      );
      const good = await connectBoard(h.mqttUrl, SLUG, "bank-foot", secrets.get("bank-foot")!, { boot: "size01" });
      await good.pulse("MA");
      await waitFor(async () => (await pulsesStored()) === before + 1, "the good board's pulse");
      await good.end();
    });
  });

  describe("node secrets", () => {
    it("a new secret is stored as a SHA-256 digest, never in plain text", async () => {
      const [row] = await q<{ secret_hash: string }>(`SELECT secret_hash FROM nodes WHERE node_id = 'quarry'`);
      expect(row.secret_hash).toMatch(/^sha256:[A-Za-z0-9_-]{43}$/);
      expect(row.secret_hash).not.toContain(secrets.get("quarry")!);
    });

    it("a bcrypt hash issued before still logs the board in, once, and is replaced by the digest", async () => {
      const secret = secrets.get("quarry")!;
      await t.deps.db.sequelize.query(`UPDATE nodes SET secret_hash = :hash WHERE node_id = 'quarry'`, { replacements: { hash: await bcrypt.hash(secret, 4) } });
      const wrong = await attempt(h.mqttUrl, { username: "quarry", password: "not-the-secret", clientId: `${SLUG}.quarry` });
      expect(wrong).toMatchObject({ ok: false, code: 4 });
      expect((await q<{ secret_hash: string }>(`SELECT secret_hash FROM nodes WHERE node_id = 'quarry'`))[0].secret_hash).toMatch(/^\$2/);
      const board = await connectBoard(h.mqttUrl, SLUG, "quarry", secret);
      await board.end();
      await waitFor(async () => (await q<{ secret_hash: string }>(`SELECT secret_hash FROM nodes WHERE node_id = 'quarry'`))[0].secret_hash.startsWith("sha256:"), "the digest");
      const again = await connectBoard(h.mqttUrl, SLUG, "quarry", secret);
      await again.end();
    });
  });
});

describe("broker: connect attempts per address", () => {
  it("a storm of bad passwords is refused without authentication work once the address's budget is spent", async () => {
    let checks = 0;
    const refusals: BrokerRefusal[] = [];
    const authenticate = async (username: string, password: string): Promise<BrokerIdentity | null> => {
      checks++;
      return username === "board-a" && password === "right" ? { kind: "node", layout: "storm", node: "board-a" } : null;
    };
    const broker = await startBroker({ port: 0, authenticate, onRefusal: (r) => refusals.push(r), connectLimits: { burst: 5, perSecond: 1 } });
    const url = `mqtt://127.0.0.1:${broker.port}`;
    try {
      // Good logins give their token back: more of them than the burst all succeed.
      for (let i = 0; i < 8; i++) {
        const good = await attempt(url, { username: "board-a", password: "right", clientId: "storm.board-a" });
        expect(good.ok).toBe(true);
        if (good.ok) await good.client.endAsync();
      }
      checks = 0;
      const storm = await Promise.all(Array.from({ length: 40 }, (_, i) => attempt(url, { username: "board-a", password: `wrong-${i}`, clientId: `storm.board-a` })));
      expect(storm.every((r) => !r.ok)).toBe(true);
      const limited = storm.filter((r) => !r.ok && r.code === 3).length;
      expect(checks).toBeLessThanOrEqual(7); // the burst, plus what refilled while the storm ran
      expect(limited).toBe(40 - checks);
      expect(refusals.filter((r) => /too many connect attempts/.test(r.reason)).every((r) => r.address === "127.0.0.1" || r.address === "::ffff:127.0.0.1")).toBe(true);
      // Even the right password waits while the budget is spent.
      const blocked = await attempt(url, { username: "board-a", password: "right", clientId: "storm.board-a" });
      expect(blocked).toMatchObject({ ok: false, code: 3 });
    } finally {
      await broker.close();
    }
  });
});
