/**
 * Interoperability: the server against a third-party broker (Debian's mosquitto 2.x) given
 * as MQTT_URL. Access rules are then mosquitto's business, so this runs it anonymous on a
 * loopback port; Blocklight's own checks (unknown node, unserved detector) still apply.
 */
import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, it } from "vitest";
import { QueryTypes } from "sequelize";
import { freePort } from "../../server/db/embeddedPostgres";
import { runtimeDeps } from "../../server/runtimeDeps";
import { startLiveRuntime, type LiveRuntime } from "../../server/runtime/liveRuntime";
import { startTestApp, type TestApp } from "../support/testApp";
import { connectBoard, waitFor } from "../support/live";

const SLUG = "kestrel-bank";
const MOSQUITTO = "/usr/sbin/mosquitto";

describe.runIf(fs.existsSync(MOSQUITTO))("with mosquitto as an external broker (MQTT_URL)", () => {
  let t: TestApp;
  let runtime: LiveRuntime;
  let broker: ChildProcess;
  let dir: string;
  let url: string;

  beforeAll(async () => {
    t = await startTestApp();
    dir = fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-mosquitto-"));
    const port = await freePort();
    fs.writeFileSync(path.join(dir, "mosquitto.conf"), [`listener ${port} 127.0.0.1`, "allow_anonymous true", "persistence false", "user root", ""].join("\n"));
    broker = spawn(MOSQUITTO, ["-c", path.join(dir, "mosquitto.conf")], { stdio: "ignore" });
    url = `mqtt://127.0.0.1:${port}`;
    const probe = async () => {
      try {
        const board = await connectBoard(url, SLUG, "probe", "probe");
        await board.end();
        return true;
      } catch {
        return false;
      }
    };
    await waitFor(probe, "mosquitto to listen");
    runtime = await startLiveRuntime({ deps: runtimeDeps(t.deps), db: t.deps.db, mqtt: { url, username: "blocklight-server", password: "unused-by-anonymous-mosquitto" } });
    t.deps.live = runtime;
    await waitFor(() => runtime.connected(), "the runtime to connect to mosquitto");
  });
  afterAll(async () => {
    await runtime?.stop();
    broker?.kill("SIGTERM");
    await t?.close();
    fs.rmSync(dir, { recursive: true, force: true });
  });

  it("applies pulses, publishes retained aspects and refuses what Blocklight refuses", async () => {
    // The demo layout's nodes exist without secrets; mosquitto does not ask for them.
    const bankFoot = await connectBoard(url, SLUG, "bank-foot", "");
    const junction = await connectBoard(url, SLUG, "junction", "");
    await waitFor(() => junction.aspects.get("M1")?.aspect === "danger", "the retained M1 command from mosquitto");
    await bankFoot.pulse("MA");
    await waitFor(() => junction.aspects.get("M1")?.aspect === "clear", "M1 clear via mosquitto");
    await bankFoot.publish(`blocklight/v1/${SLUG}/node/stranger/pulse`, JSON.stringify({ detector: "MA", seq: 1, boot: "x" }));
    await waitFor(async () => {
      const rows = await t.deps.db.sequelize.query<{ reason: string }>(`SELECT reason FROM events WHERE status = 'rejected'`, { type: QueryTypes.SELECT });
      return rows.some((r) => /unknown node "stranger"/.test(r.reason));
    }, "the stranger's pulse recorded as rejected");
    await Promise.all([bankFoot.end(), junction.end()]);
  });
});
