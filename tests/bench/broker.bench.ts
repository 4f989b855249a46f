/**
 * `npm run bench -- broker`: how much a storm of bad logins costs a good board.
 *
 * Its own PostgreSQL and the broker as its own process (`broker/index.ts`, as `npm start`
 * runs it). One good board publishes QoS 1 messages at a steady rate and times each PUBACK
 * (the broker's one thread answers it), first at rest, then while 200 clients keep connecting
 * with the good board's node id as user name and wrong passwords, each trying again as soon
 * as it is refused (tests/bench/brokerStorm.ts, a process of its own). Goal (issue 10): p99 during the storm ≤ 2 × p99 at rest.
 */
import { spawn } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import mqtt from "mqtt";
import { Bus } from "../../server/bus";
import { configFromEnv } from "../../server/config";
import { openDatabase } from "../../server/db/database";
import { freePort, startEmbeddedPostgres } from "../../server/db/embeddedPostgres";
import type { AppDeps } from "../../server/deps";
import { importLayout, registerNode } from "../../server/features/layouts/service";
import { createLogger } from "../../server/logger";
import type { Report } from "./run";

const LAYOUT_FILE = new URL("../fixtures/kestrel-bank.layout.json", import.meta.url);
const SLUG = "kestrel-bank";
const NODE = "bank-foot";
const STORM_CLIENTS = 200;
/** The good board's rate, as a busy board would send pulses. */
const PUBLISHES_PER_SECOND = 100;
const PHASE_SECONDS = 6;
/** A refused attacker waits this long before trying again (none would be kinder than mqtt.js' 1 s). */
const ATTACK_RETRY_MS = 50;
const STORM_BUILD_UP_MS = 1_500;

const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));
const percentile = (sorted: number[], p: number) => sorted[Math.min(sorted.length - 1, Math.floor((p / 100) * sorted.length))] ?? Number.NaN;

export async function run(report: Report): Promise<void> {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-bench-broker-"));
  const pg = await startEmbeddedPostgres({ dataDir, port: await freePort() });
  const cleanups: (() => Promise<unknown> | unknown)[] = [() => pg.stop(), () => fs.rmSync(dataDir, { recursive: true, force: true })];
  try {
    const db = await openDatabase(pg.url);
    cleanups.unshift(() => db.close());
    const deps: AppDeps = { config: { ...configFromEnv({}), serveClient: false }, db, logger: createLogger("silent"), bus: new Bus() };
    await importLayout(deps, JSON.parse(fs.readFileSync(LAYOUT_FILE, "utf8")), null);
    const { secret } = await registerNode(deps, SLUG, { id: NODE, name: "Bank foot board", detectors: ["MA"], signals: [] });

    const mqttPort = await freePort();
    const broker = spawn(process.execPath, ["--import", "tsx", "broker/index.ts"], {
      env: { ...process.env, DATABASE_URL: pg.url, MQTT_PORT: String(mqttPort), SERVER_MQTT_PASSWORD: "bench-server-password", DATA_DIR: dataDir, LOG_LEVEL: "error" },
      stdio: ["ignore", "ignore", "inherit"],
    });
    cleanups.unshift(() => new Promise<void>((resolve) => (broker.exitCode !== null ? resolve() : (broker.once("exit", () => resolve()), broker.kill("SIGTERM")))));
    const url = `mqtt://127.0.0.1:${mqttPort}`;
    let board: mqtt.MqttClient | undefined;
    for (let tries = 0; !board; tries++) {
      try {
        board = await mqtt.connectAsync(url, { protocolVersion: 4, username: NODE, password: secret, clientId: `${SLUG}.${NODE}`, reconnectPeriod: 0 });
      } catch (err) {
        if (tries > 200) throw err;
        await sleep(50);
      }
    }
    (board.stream as { setNoDelay?: (on: boolean) => void }).setNoDelay?.(true);
    const good = board;
    cleanups.unshift(() => good.endAsync());

    const topic = `blocklight/v1/${SLUG}/node/${NODE}/status`;
    const payload = JSON.stringify({ online: true, fw: "bench" });
    const pubackTimes = async (): Promise<number[]> => {
      const times: number[] = [];
      const interval = 1000 / PUBLISHES_PER_SECOND;
      const until = performance.now() + PHASE_SECONDS * 1000;
      let next = performance.now();
      while (performance.now() < until) {
        const started = performance.now();
        await good.publishAsync(topic, payload, { qos: 1 });
        times.push(performance.now() - started);
        next += interval;
        await sleep(Math.max(0, next - performance.now()));
      }
      return times.sort((a, b) => a - b);
    };

    const rest = await pubackTimes();
    report("broker.puback_p50_ms.rest", percentile(rest, 50), "ms");
    report("broker.puback_p99_ms.rest", percentile(rest, 99), "ms");

    const storm = spawn(process.execPath, ["--import", "tsx", "tests/bench/brokerStorm.ts", url, NODE, `${SLUG}.${NODE}`, String(STORM_CLIENTS), String(ATTACK_RETRY_MS)], {
      stdio: ["ignore", "pipe", "inherit"],
    });
    const stopStorm = () => new Promise<void>((resolve) => (storm.exitCode !== null ? resolve() : (storm.once("exit", () => resolve()), storm.kill("SIGKILL"))));
    cleanups.unshift(stopStorm);
    let attempts = 0;
    storm.stdout.setEncoding("utf8").on("data", (text: string) => {
      const last = text.trim().split("\n").pop();
      if (last) attempts = Number(last);
    });
    await sleep(STORM_BUILD_UP_MS);
    const attemptsBefore = attempts;
    const during = await pubackTimes();
    const stormAttempts = attempts - attemptsBefore;
    await stopStorm();
    report("broker.puback_p50_ms.storm", percentile(during, 50), "ms");
    report("broker.puback_p99_ms.storm", percentile(during, 99), "ms");
    report("broker.puback_p99_storm_over_rest", percentile(during, 99) / percentile(rest, 99), "x");
    report("broker.storm_bad_logins_per_s", stormAttempts / PHASE_SECONDS, "1/s");
  } finally {
    for (const cleanup of cleanups) {
      try {
        await cleanup();
      } catch {
        /* best effort on the way out */
      }
    }
  }
}
