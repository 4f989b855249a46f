/**
 * Attack pass, a stolen board secret: the broker checks a secret only at CONNECT, so the
 * remedy (re-issuing the secret, or removing the node) must also end a connection already
 * made with the old one; otherwise the thief keeps publishing pulses for as long as it stays
 * connected. Boards whose credentials did not change must stay connected.
 */
import bcrypt from "bcryptjs";
import mqtt, { type MqttClient } from "mqtt";
import { QueryTypes } from "sequelize";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { LayoutDetail } from "@shared/contract/rest";
import { issueBoardSecrets, KESTREL_BOARDS, startLiveHarness, waitFor, type LiveHarness } from "../support/live";
import { startTestApp, type TestApp } from "../support/testApp";

const SLUG = "kestrel-bank";

type Attempt = { ok: true; client: MqttClient } | { ok: false; code: number | undefined };

/** One connect as `node` with its board client id, no retries. */
function connectAs(url: string, node: string, secret: string): Promise<Attempt> {
  return new Promise((resolve) => {
    const client = mqtt.connect(url, { protocolVersion: 4, clientId: `${SLUG}.${node}`, username: node, password: secret, clean: true, reconnectPeriod: 0, connectTimeout: 5_000 });
    client.once("connect", () => resolve({ ok: true, client }));
    client.once("error", (err) => {
      client.end(true);
      resolve({ ok: false, code: (err as { code?: number }).code });
    });
  });
}

async function connected(url: string, node: string, secret: string): Promise<MqttClient> {
  const a = await connectAs(url, node, secret);
  if (!a.ok) throw new Error(`${node} could not connect (CONNACK ${a.code})`);
  return a.client;
}

const closed = (client: MqttClient, who: string) => waitFor(() => !client.connected, `${who}'s connection to end`);

describe("a board's connection ends with the secret it connected with", () => {
  let t: TestApp;
  let h: LiveHarness;
  let secrets: Map<string, string>;
  const open: MqttClient[] = [];
  const track = (c: MqttClient) => (open.push(c), c);
  beforeAll(async () => {
    t = await startTestApp();
    h = await startLiveHarness(t);
    secrets = await issueBoardSecrets(t, SLUG, Object.values(KESTREL_BOARDS));
  });
  afterAll(async () => {
    for (const c of open) c.end(true);
    await h?.close();
    await t?.close();
  });

  /** Re-issues a board's secret through the API, as a maintainer would after a theft. */
  async function reissue(node: keyof typeof KESTREL_BOARDS): Promise<string> {
    const [id, detectors, signals] = KESTREL_BOARDS[node];
    const maintainer = await t.signIn("maintainer");
    const res = await maintainer.post(`/api/layouts/${SLUG}/nodes`).send({ id, name: id, detectors, signals });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    secrets.set(id, res.body.secret);
    return res.body.secret;
  }

  /**
   * Notices arrive in commit order: once a board whose secret is re-issued after `change` has
   * been dropped, every check `change` caused is done too.
   */
  async function afterChecksOf(change: () => Promise<void>) {
    const probe = track(await connected(h.mqttUrl, "quarry", secrets.get("quarry")!));
    await change();
    await reissue("quarry");
    await closed(probe, "the probe board");
    await h.credentials.checked();
  }

  it("re-issuing the secret drops the connection made with the old one, which cannot come back", async () => {
    const stolen = secrets.get("junction")!;
    const thief = track(await connected(h.mqttUrl, "junction", stolen));
    const fresh = await reissue("junction");

    await closed(thief, "the thief");
    expect(thief.connected).toBe(false);
    expect(h.refusals.some((r) => r.clientId === `${SLUG}.junction` && /re-issued/.test(r.reason))).toBe(true);
    const again = await connectAs(h.mqttUrl, "junction", stolen);
    expect(again.ok ? "connected" : again.code).toBe(4);
    // The board given the new secret connects and stays.
    const board = track(await connected(h.mqttUrl, "junction", fresh));
    await afterChecksOf(async () => {});
    expect(board.connected).toBe(true);
  });

  it("removing the node from the records drops its board; a save that keeps a board keeps it connected", async () => {
    const engineer = await t.signIn("engineer");
    const bankFoot = track(await connected(h.mqttUrl, "bank-foot", secrets.get("bank-foot")!));
    const junction = track(await connected(h.mqttUrl, "junction", secrets.get("junction")!));
    const { versions: _v, liveVersion: _l, archivedAt: _a, ...layout } = (await engineer.get(`/api/layouts/${SLUG}`)).body.layout as LayoutDetail;

    // Renaming a board is a save that keeps every secret: nobody is dropped.
    const renamed = { ...layout, format: "blocklight.layout/1", nodes: layout.nodes.map((n) => (n.id === "junction" ? { ...n, name: "Junction board (renamed)" } : n)) };
    await afterChecksOf(async () => {
      const res = await engineer.put(`/api/layouts/${SLUG}`).send(renamed);
      expect(res.status, JSON.stringify(res.body)).toBe(200);
    });
    expect(bankFoot.connected).toBe(true);
    expect(junction.connected).toBe(true);

    // Its detector moves to the junction board and bank-foot's record goes.
    const current = (await engineer.get(`/api/layouts/${SLUG}`)).body.layout as LayoutDetail;
    const withoutBankFoot = {
      ...renamed,
      revision: current.revision,
      nodes: renamed.nodes.filter((n) => n.id !== "bank-foot").map((n) => (n.id === "junction" ? { ...n, detectors: ["MA", ...n.detectors] } : n)),
    };
    const res = await engineer.put(`/api/layouts/${SLUG}`).send(withoutBankFoot);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    await closed(bankFoot, "the removed board");
    expect(bankFoot.connected).toBe(false);
    expect(junction.connected).toBe(true);
  });

  it("a board let in by a secret stored the old way (bcrypt, replaced on login) stays connected", async () => {
    const secret = secrets.get("junction")!;
    await t.deps.db.sequelize.query(`UPDATE nodes SET secret_hash = :hash WHERE node_id = 'junction'`, { replacements: { hash: bcrypt.hashSync(secret, 4) }, type: QueryTypes.UPDATE });
    // The login replaces the stored hash with its fast form: a change of secret_hash, not of the secret.
    const board = track(await connected(h.mqttUrl, "junction", secret));
    await waitFor(async () => {
      const [row] = await t.deps.db.sequelize.query<{ secret_hash: string }>(`SELECT secret_hash FROM nodes WHERE node_id = 'junction'`, { type: QueryTypes.SELECT });
      return row.secret_hash.startsWith("sha256:");
    }, "the legacy hash to be replaced");
    await afterChecksOf(async () => {});
    expect(board.connected).toBe(true);
  });
});
