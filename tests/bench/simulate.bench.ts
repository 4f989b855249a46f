/**
 * `npm run bench -- simulate`: does a viewer's simulation hold back the live pipeline?
 *
 * Its own PostgreSQL, the broker as its own process, the runtime and the app in this process
 * (as `npm start` runs the server). Two boards run trains over Kestrel Bank (MA, MA → M1 clear;
 * ME, ME → M1 danger; JX, JX) and time each pulse → aspect command at the junction board, at
 * rest and while a viewer (tests/bench/simulateViewer.ts, its own process) keeps posting the largest simulation the server allows (kestrel-bank,
 * as many inputs as the input and output limits let through). Goal (issue 10): p99 < 50 ms.
 */
import { spawn } from "node:child_process";
import fs from "node:fs";
import http from "node:http";
import type { AddressInfo } from "node:net";
import os from "node:os";
import path from "node:path";
import mqtt from "mqtt";
import { createApp } from "../../server/app";
import { Bus } from "../../server/bus";
import { configFromEnv } from "../../server/config";
import { openDatabase } from "../../server/db/database";
import { freePort, startEmbeddedPostgres } from "../../server/db/embeddedPostgres";
import type { AppDeps } from "../../server/deps";
import { hashSecret, SESSION_COOKIE, startSession } from "../../server/features/auth/service";
import { importLayout, registerNode } from "../../server/features/layouts/service";
import { MAX_EVENTS, MAX_OUTPUT_CELLS } from "../../server/features/simulate/simulation";
import { createLogger } from "../../server/logger";
import { startLiveRuntime } from "../../server/runtime/liveRuntime";
import type { LayoutFile } from "@shared/layout/schema";
import type { Report } from "./run";
import { runtimeDeps } from "../../server/runtimeDeps";

const LAYOUT_FILE = new URL("../fixtures/kestrel-bank.layout.json", import.meta.url);
const SLUG = "kestrel-bank";
const PHASE_SECONDS = 8;
/** Between the pulses of a train: two axles, then the next detector. */
const PULSE_GAP_MS = 40;

const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));
const percentile = (sorted: number[], p: number) => sorted[Math.min(sorted.length - 1, Math.floor((p / 100) * sorted.length))] ?? Number.NaN;

export async function run(report: Report): Promise<void> {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-bench-simulate-"));
  const pg = await startEmbeddedPostgres({ dataDir, port: await freePort() });
  const cleanups: (() => Promise<unknown> | unknown)[] = [() => pg.stop(), () => fs.rmSync(dataDir, { recursive: true, force: true })];
  try {
    const db = await openDatabase(pg.url);
    cleanups.unshift(() => db.close());
    const config = { ...configFromEnv({}), sessionSecret: "bench-secret", serveClient: false };
    const logger = createLogger("silent");
    const deps: AppDeps = { config, db, logger, bus: new Bus(logger) };
    const layout = JSON.parse(fs.readFileSync(LAYOUT_FILE, "utf8")) as LayoutFile;
    await importLayout(deps, layout, null);
    const viewer = await db.models.User.create({ email: "viewer@fernmoor.example", name: "Bench viewer", role: "viewer", passwordHash: await hashSecret("bench") });
    const bankFootSecret = (await registerNode(deps, SLUG, { id: "bank-foot", name: "Bank foot board", detectors: ["MA"], signals: [] })).secret;
    const junctionSecret = (await registerNode(deps, SLUG, { id: "junction", name: "Junction board", detectors: ["ME", "JX"], signals: ["M1"] })).secret;

    const serverPassword = "bench-server-password";
    const mqttPort = await freePort();
    const broker = spawn(process.execPath, ["--import", "tsx", "broker/index.ts"], {
      env: { ...process.env, DATABASE_URL: pg.url, MQTT_PORT: String(mqttPort), SERVER_MQTT_PASSWORD: serverPassword, DATA_DIR: dataDir, LOG_LEVEL: "error" },
      stdio: ["ignore", "ignore", "inherit"],
    });
    cleanups.unshift(() => new Promise<void>((resolve) => (broker.exitCode !== null ? resolve() : (broker.once("exit", () => resolve()), broker.kill("SIGTERM")))));
    const mqttUrl = `mqtt://127.0.0.1:${mqttPort}`;
    const connect = async (options: mqtt.IClientOptions) => {
      for (let tries = 0; ; tries++) {
        try {
          const client = await mqtt.connectAsync(mqttUrl, { protocolVersion: 4, reconnectPeriod: 0, ...options });
          (client.stream as { setNoDelay?: (on: boolean) => void }).setNoDelay?.(true);
          return client;
        } catch (err) {
          if (tries > 200) throw err;
          await sleep(50);
        }
      }
    };
    await (await connect({ username: "blocklight-server", password: serverPassword, clientId: "blocklight-server.bench-probe" })).endAsync();
    const runtime = await startLiveRuntime({ deps: runtimeDeps(deps), db: deps.db, mqtt: { url: mqttUrl, username: "blocklight-server", password: serverPassword } });
    cleanups.unshift(() => runtime.stop());
    deps.live = runtime;
    const server = http.createServer(createApp(deps));
    await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
    cleanups.unshift(() => new Promise<void>((resolve) => (server.closeAllConnections(), server.close(() => resolve()))));
    const baseUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;

    const bankFoot = await connect({ username: "bank-foot", password: bankFootSecret, clientId: `${SLUG}.bank-foot` });
    const junction = await connect({ username: "junction", password: junctionSecret, clientId: `${SLUG}.junction` });
    cleanups.unshift(() => Promise.all([bankFoot.endAsync(), junction.endAsync()]));
    await junction.subscribeAsync(`blocklight/v1/${SLUG}/signal/#`, { qos: 1 });

    const boot = `sim${Date.now().toString(36)}`;
    let seq = 0;
    const pulse = (board: mqtt.MqttClient, node: string, detector: string) =>
      board.publishAsync(`blocklight/v1/${SLUG}/node/${node}/pulse`, JSON.stringify({ detector, seq: ++seq, boot }), { qos: 1 });
    let waiting: { aspect: string; since: number } | null = null;
    let samples: number[] = [];
    junction.on("message", (topic, payload) => {
      if (!topic.endsWith("/M1/aspect") || !waiting) return;
      const { aspect } = JSON.parse(payload.toString()) as { aspect: string };
      if (aspect === waiting.aspect) {
        samples.push(performance.now() - waiting.since);
        waiting = null;
      }
    });
    /** One train: pulse → aspect times for MA → clear and ME → danger. */
    const train = async () => {
      for (const [board, node, detector, aspect] of [
        [bankFoot, "bank-foot", "MA", "clear"],
        [junction, "junction", "ME", "danger"],
        [junction, "junction", "JX", null],
      ] as const) {
        if (aspect) waiting = { aspect, since: performance.now() };
        await pulse(board, node, detector);
        await sleep(PULSE_GAP_MS);
        await pulse(board, node, detector);
        await sleep(PULSE_GAP_MS);
      }
    };
    const phase = async () => {
      samples = [];
      const until = performance.now() + PHASE_SECONDS * 1000;
      while (performance.now() < until) await train();
      await sleep(500);
      return [...samples].sort((a, b) => a - b);
    };

    await phase(); // warm-up: the first commits and publishes
    const rest = await phase();
    report("live.pulse_to_aspect_p50_ms.rest", percentile(rest, 50), "ms");
    report("live.pulse_to_aspect_p99_ms.rest", percentile(rest, 99), "ms");

    // The largest simulation the limits allow for this layout.
    const rulebook = layout.rulebook;
    const cellsPerStep = 1 + Object.keys(rulebook.latches ?? {}).length + Object.keys(rulebook.counters ?? {}).length + Object.keys(rulebook.selectors ?? {}).length + layout.signals.length;
    const inputs = Math.min(MAX_EVENTS, Math.floor(MAX_OUTPUT_CELLS / cellsPerStep));
    const events = Array.from({ length: inputs }, (_, i) => ({ type: "pulse", detector: ["MA", "MA", "ME", "ME", "JX", "JX"][i % 6], at: i * 500 }));
    const bodyFile = path.join(dataDir, "simulation.json");
    fs.writeFileSync(bodyFile, JSON.stringify({ layout, events }));
    const cookie = `${SESSION_COOKIE}=${(await startSession(deps, viewer)).token}`;
    const viewerProcess = spawn(process.execPath, ["--import", "tsx", "tests/bench/simulateViewer.ts", `${baseUrl}/api/simulate`, cookie, bodyFile], {
      stdio: ["ignore", "pipe", "inherit"],
    });
    const stopViewer = () => new Promise<void>((resolve) => (viewerProcess.exitCode !== null ? resolve() : (viewerProcess.once("exit", () => resolve()), viewerProcess.kill("SIGKILL"))));
    cleanups.unshift(stopViewer);
    const simulationMs: number[] = [];
    viewerProcess.stdout.setEncoding("utf8").on("data", (text: string) => {
      for (const line of text.trim().split("\n")) if (line) simulationMs.push(Number(line));
    });
    while (simulationMs.length === 0 && viewerProcess.exitCode === null) await sleep(50); // the first run is under way
    const during = await phase();
    await stopViewer();
    report("live.pulse_to_aspect_p50_ms.during_simulation", percentile(during, 50), "ms");
    report("live.pulse_to_aspect_p99_ms.during_simulation", percentile(during, 99), "ms");
    report("simulate.largest_allowed_inputs", inputs, "inputs");
    report("simulate.largest_allowed_ms", percentile([...simulationMs].sort((a, b) => a - b), 50), "ms");
    report("simulate.runs_during_phase", simulationMs.length, "runs");
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
