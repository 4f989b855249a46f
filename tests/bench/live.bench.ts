/**
 * Live pipeline figures: its own PostgreSQL (durable settings, as `npm start` runs it), the
 * broker as its own process (`broker/index.ts`, as `npm start` runs it), the runtime in this
 * process, real mqtt.js boards and a socket.io browser, all on loopback.
 *
 * - bare MQTT QoS 1 publish → subscribe round trip (the floor for everything else);
 * - pulse → aspect command at a subscribed board, and pulse → socket.io update, at 50 and
 *   500 pulses/s;
 * - a ramp of offered rates: the highest with every pulse committed and pulse → socket
 *   update p99 under 100 ms.
 *
 * Pulses come from four boards. The bench layout is a test bench of the (invented) Fernmoor society: 20 detectors, each
 * toggling its own signal, so every pulse changes exactly one aspect and pulses for one
 * signal are 20 pulses apart (40 ms at 500/s: no two land in one group commit there).
 */
import { spawn } from "node:child_process";
import fs from "node:fs";
import http from "node:http";
import type { AddressInfo } from "node:net";
import os from "node:os";
import path from "node:path";
import mqtt from "mqtt";
import { io as ioClient } from "socket.io-client";
import type { LiveUpdate } from "@shared/contract/live";
import { LAYOUT_FORMAT, type LayoutFile } from "@shared/layout/schema";
import { Bus } from "../../server/bus";
import { configFromEnv } from "../../server/config";
import { openDatabase } from "../../server/db/database";
import { freePort, startEmbeddedPostgres } from "../../server/db/embeddedPostgres";
import type { AppDeps } from "../../server/deps";
import { startSession, hashSecret, SESSION_COOKIE } from "../../server/features/auth/service";
import { importLayout, registerNode } from "../../server/features/layouts/service";
import { attachLiveSocket } from "../../server/features/live/socket";
import { createApp } from "../../server/app";
import { createLogger } from "../../server/logger";
import { runtimeDeps } from "../../server/runtimeDeps";
import { startLiveRuntime } from "../../server/runtime/liveRuntime";

type Report = (name: string, value: number, unit: string) => void;

const SIGNALS = 20;
/** Boards sharing the offered rate, as on a layout (one board at 10k/s is no layout's case). */
const BOARDS = 4;
const SLUG = "kestrel-bench";
const BARE_SAMPLES = 2_000;
const RATE_SECONDS = 6;
/** Below this rate every pulse toggles a signal; above it, the rest are filler pulses on a detector no rule uses (like a second axle). */
const TOGGLES_PER_SECOND = 50;
const RAMP = [1_000, 2_000, 5_000, 10_000];
const RAMP_SECONDS = 3;
const SUSTAINED_P99_MS = 100;
/** After the last pulse of a step, how long the pipeline may take to catch up. */
const DRAIN_GRACE_MS = 2_000;

const pad = (i: number) => String(i + 1).padStart(2, "0");

function benchLayout(): LayoutFile {
  const ids = Array.from({ length: SIGNALS }, (_, i) => pad(i));
  return {
    format: LAYOUT_FORMAT,
    slug: SLUG,
    name: "Kestrel Bank test bench",
    scale: { name: "G", ratio: 22.5 },
    lines: [{ id: "bench", name: "Test bench" }],
    detectors: [
      ...ids.map((id, i) => ({ id: `T${id}`, name: `Bench detector ${id}`, line: "bench", at: i })),
      ...Array.from({ length: BOARDS }, (_, k) => ({ id: `FILL${k}`, name: `Bench filler detector ${k}`, line: "bench", at: SIGNALS + k })),
    ],
    signals: ids.map((id, i) => ({ id: `S${id}`, name: `Bench signal ${id}`, line: "bench", at: i + 0.5, aspects: ["danger", "clear"] })),
    points: [],
    nodes: [],
    rulebook: {
      format: "blocklight.rulebook/1",
      latches: Object.fromEntries(ids.map((id) => [`lit${id}`, false])),
      counters: {},
      selectors: {},
      initial: Object.fromEntries(ids.map((id) => [`S${id}`, "danger"])),
      rules: ids.flatMap((id) => [
        { id: `on-${id}`, on: { pass: `T${id}` }, if: { not: { latch: `lit${id}` } }, do: [{ set: `lit${id}` }, { show: `S${id}`, aspect: "clear" }] },
        { id: `off-${id}`, on: { pass: `T${id}` }, if: { latch: `lit${id}` }, do: [{ clear: `lit${id}` }, { show: `S${id}`, aspect: "danger" }] },
      ]),
    },
  } as LayoutFile;
}

function percentile(sorted: number[], p: number): number {
  if (sorted.length === 0) return Number.NaN;
  return sorted[Math.min(sorted.length - 1, Math.floor((p / 100) * sorted.length))];
}
const sortNum = (xs: number[]) => [...xs].sort((a, b) => a - b);
const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

export async function run(report: Report): Promise<void> {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-bench-live-"));
  const pg = await startEmbeddedPostgres({ dataDir, port: await freePort() });
  const cleanups: (() => Promise<unknown> | unknown)[] = [() => pg.stop(), () => fs.rmSync(dataDir, { recursive: true, force: true })];
  try {
    const { url } = pg;
    const db = await openDatabase(url);
    cleanups.unshift(() => db.close());
    const config = { ...configFromEnv({}), sessionSecret: "bench-secret", serveClient: false };
    const deps: AppDeps = { config, db, logger: createLogger("silent"), bus: new Bus() };
    const user = await db.models.User.create({ email: "signaller@fernmoor.example", name: "Bench signaller", role: "signaller", passwordHash: await hashSecret("bench") });
    await importLayout(deps, benchLayout(), null);
    const signalIds = Array.from({ length: SIGNALS }, (_, i) => `S${pad(i)}`);
    const detectorIds = Array.from({ length: SIGNALS }, (_, i) => `T${pad(i)}`);
    const secrets: string[] = [];
    for (let k = 0; k < BOARDS; k++) {
      const detectors = [...detectorIds.filter((_, i) => i % BOARDS === k), `FILL${k}`];
      const { secret } = await registerNode(deps, SLUG, { id: `bench-board-${k}`, name: `Bench board ${k}`, detectors, signals: k === 0 ? signalIds : [] });
      secrets.push(secret);
    }

    const serverPassword = "bench-server-password";
    const mqttPort = await freePort();
    const broker = spawn(process.execPath, ["--import", "tsx", "broker/index.ts"], {
      env: { ...process.env, DATABASE_URL: url, MQTT_PORT: String(mqttPort), SERVER_MQTT_PASSWORD: serverPassword, DATA_DIR: dataDir, LOG_LEVEL: "warn" },
      stdio: ["ignore", "ignore", "inherit"],
    });
    cleanups.unshift(() => new Promise<void>((resolve) => (broker.exitCode !== null ? resolve() : (broker.once("exit", () => resolve()), broker.kill("SIGTERM")))));
    const mqttUrl = `mqtt://127.0.0.1:${mqttPort}`;
    for (let tries = 0; ; tries++) {
      try {
        await (await mqtt.connectAsync(mqttUrl, { protocolVersion: 4, username: "blocklight-server", password: serverPassword, clientId: "blocklight-server.bench-probe", reconnectPeriod: 0 })).endAsync();
        break;
      } catch (err) {
        if (tries > 200) throw err;
        await sleep(50);
      }
    }
    const runtime = await startLiveRuntime({ deps: runtimeDeps(deps), db: deps.db, mqtt: { url: mqttUrl, username: "blocklight-server", password: serverPassword } });
    cleanups.unshift(() => runtime.stop());
    deps.live = runtime;
    const server = http.createServer(createApp(deps));
    await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
    const sockets = attachLiveSocket(server, deps);
    cleanups.unshift(() => new Promise<void>((resolve) => server.close(() => resolve())));
    cleanups.unshift(() => sockets.close());

    // ── bare MQTT round trip ──
    const bareSub = await mqtt.connectAsync(mqttUrl, { protocolVersion: 4, username: "blocklight-server", password: serverPassword, clientId: "blocklight-server.bench-bare-sub" });
    const barePub = await mqtt.connectAsync(mqttUrl, { protocolVersion: 4, username: "blocklight-server", password: serverPassword, clientId: "blocklight-server.bench-bare-pub" });
    for (const c of [bareSub, barePub]) (c.stream as { setNoDelay?: (on: boolean) => void }).setNoDelay?.(true);
    await bareSub.subscribeAsync("bench/round-trip", { qos: 1 });
    const bare: number[] = [];
    for (let i = 0; i < BARE_SAMPLES; i++) {
      const started = performance.now();
      const got = new Promise<void>((resolve) => bareSub.once("message", () => resolve()));
      barePub.publish("bench/round-trip", String(i), { qos: 1 });
      await got;
      bare.push(performance.now() - started);
    }
    const bareSorted = sortNum(bare);
    report("mqtt-bare-roundtrip-p50", percentile(bareSorted, 50), "ms");
    report("mqtt-bare-roundtrip-p99", percentile(bareSorted, 99), "ms");
    await Promise.all([bareSub.endAsync(), barePub.endAsync()]);

    // ── a board and a browser ──
    const boards = await Promise.all(
      secrets.map((secret, k) => mqtt.connectAsync(mqttUrl, { protocolVersion: 4, username: `bench-board-${k}`, password: secret, clientId: `${SLUG}.bench-board-${k}` })),
    );
    for (const b of boards) (b.stream as { setNoDelay?: (on: boolean) => void }).setNoDelay?.(true);
    const board = boards[0];
    await board.subscribeAsync(`blocklight/v1/${SLUG}/signal/#`, { qos: 1 });
    const socket = ioClient(`http://127.0.0.1:${(server.address() as AddressInfo).port}`, {
      transports: ["websocket"],
      extraHeaders: { cookie: `${SESSION_COOKIE}=${(await startSession(deps, user)).token}` },
    });
    await new Promise<void>((resolve, reject) => {
      socket.once("connect", () => resolve());
      socket.once("connect_error", reject);
    });
    const joined = await new Promise<{ ok: boolean }>((resolve) => socket.emit("live:join", { slug: SLUG }, resolve));
    if (!joined.ok) throw new Error("the bench browser could not join");

    // Per-run bookkeeping: send time per seq, FIFO of pending pulses per signal.
    const boot = `bench${Date.now().toString(36)}`;
    const seqs = new Array<number>(BOARDS).fill(0);
    let sentAt = new Map<string, number>();
    let pendingBySignal = new Map<string, number[]>();
    let toAspect: number[] = [];
    let toSocket: number[] = [];
    let committed = 0;
    /** Board publish → server receipt (broker hop plus any queue in front of the runtime). */
    const ingress: number[] = [];
    board.on("message", (topic) => {
      const signal = topic.split("/")[4];
      const started = pendingBySignal.get(signal)?.shift();
      if (started !== undefined) toAspect.push(performance.now() - started);
    });
    socket.on("live:update", (update: LiveUpdate) => {
      for (const { event } of update.steps) {
        if (event?.kind !== "pulse" || event.boot !== boot) continue;
        const key = `${event.node}:${event.seq}`;
        const started = sentAt.get(key);
        if (started === undefined) continue;
        // The server stamps receipt in wall-clock ms; same process, so the clocks agree.
        ingress.push(Date.parse(event.receivedAt) - (performance.timeOrigin + started));
        toSocket.push(performance.now() - started);
        sentAt.delete(key);
      }
      committed++;
    });
    // Retained commands from the start arrive first; let them pass.
    await sleep(300);

    /** Offers `rate` pulses/s for `seconds`; returns when every pulse was pushed or the grace ran out. */
    async function offer(rate: number, seconds: number): Promise<{ sent: number; committed: number; drainMs: number }> {
      sentAt = new Map();
      ingress.length = 0;
      pendingBySignal = new Map();
      toAspect = [];
      toSocket = [];
      committed = 0;
      const total = Math.round(rate * seconds);
      const toggleEvery = Math.max(1, Math.round(rate / TOGGLES_PER_SECOND));
      const begin = performance.now();
      let sent = 0;
      let toggles = 0;
      while (sent < total) {
        const due = Math.min(total, Math.floor(((performance.now() - begin) / 1000) * rate) + 1);
        for (; sent < due; sent++) {
          const now = performance.now();
          let k = sent % BOARDS;
          let detector = `FILL${k}`;
          if (sent % toggleEvery === 0) {
            const i = toggles++ % SIGNALS;
            k = i % BOARDS;
            detector = detectorIds[i];
            const list = pendingBySignal.get(signalIds[i]) ?? [];
            list.push(now);
            pendingBySignal.set(signalIds[i], list);
          }
          const seq = ++seqs[k];
          sentAt.set(`bench-board-${k}:${seq}`, now);
          boards[k].publish(`blocklight/v1/${SLUG}/node/bench-board-${k}/pulse`, `{"detector":"${detector}","seq":${seq},"boot":"${boot}"}`, { qos: 1 });
        }
        await sleep(1);
      }
      const lastSent = performance.now();
      while (committed < total && performance.now() - lastSent < DRAIN_GRACE_MS) await sleep(2);
      await runtime.idle();
      return { sent: total, committed, drainMs: performance.now() - lastSent };
    }

    for (const rate of process.env.BENCH_RAMP_ONLY ? [] : [50, 500]) {
      const result = await offer(rate, RATE_SECONDS);
      const a = sortNum(toAspect);
      const s = sortNum(toSocket);
      report(`e2e-pulse-to-aspect-${rate}ps-p50`, percentile(a, 50), "ms");
      report(`e2e-pulse-to-aspect-${rate}ps-p99`, percentile(a, 99), "ms");
      report(`e2e-pulse-to-socket-${rate}ps-p50`, percentile(s, 50), "ms");
      report(`e2e-pulse-to-socket-${rate}ps-p99`, percentile(s, 99), "ms");
      report(`e2e-${rate}ps-committed`, result.committed / result.sent, "fraction");
      report(`e2e-${rate}ps-aspect-samples`, a.length, "count");
      report(`e2e-${rate}ps-p50-over-bare-p50`, percentile(a, 50) / percentile(bareSorted, 50), "x");
      await sleep(200);
    }

    let best = 0;
    for (const rate of process.env.BENCH_RAMP ? process.env.BENCH_RAMP.split(",").map(Number) : RAMP) {
      const result = await offer(rate, RAMP_SECONDS);
      const s = sortNum(toSocket);
      const p99 = percentile(s, 99);
      report(`ramp-${rate}ps-committed`, result.committed / result.sent, "fraction");
      report(`ramp-${rate}ps-pulse-to-socket-p50`, percentile(s, 50), "ms");
      report(`ramp-${rate}ps-pulse-to-socket-p99`, p99, "ms");
      report(`ramp-${rate}ps-catch-up-after-last-pulse`, result.drainMs, "ms");
      report(`ramp-${rate}ps-pulse-to-server-receipt-p99`, percentile(sortNum(ingress), 99), "ms");
      const ok = result.committed === result.sent && p99 < SUSTAINED_P99_MS;
      if (ok) best = rate;
      await sleep(500);
    }
    report("sustained-pulses-per-second", best, "pulses/s");

    socket.disconnect();
    await Promise.all(boards.map((b) => b.endAsync()));
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
