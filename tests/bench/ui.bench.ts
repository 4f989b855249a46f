/**
 * The live page in headless chromium under load: a generated layout of 100 detectors and 40
 * signals (the Fernmoor society's imaginary "Moor Yard" test panel: four lines of 25
 * detectors), every pulse toggling one signal, 200 pulses/s sent as real MQTT messages.
 *
 * - frames per second the page keeps up while the pulses arrive;
 * - pulse → aspect visibly changed in the page (the first animation frame after the
 *   `data-aspect` attribute changed), p50 and p99;
 * - dropped updates: aspect changes expected but never seen, and signals whose final aspect
 *   differs from the expected one;
 * - first-load JS of dist/ (entry + modulepreloads, gzipped) and all JS for comparison.
 *
 * Needs `npx vite build` first.
 */
import fs from "node:fs";
import http from "node:http";
import type { AddressInfo } from "node:net";
import os from "node:os";
import path from "node:path";
import zlib from "node:zlib";
import mqtt from "mqtt";
import { chromium } from "playwright-core";
import { io as ioClient } from "socket.io-client";
import type { LiveUpdate } from "@shared/contract/live";
import { databaseAuthenticator } from "../../broker/auth";
import { startBroker } from "../../broker/server";
import { LAYOUT_FORMAT, type LayoutFile } from "@shared/layout/schema";
import { createApp } from "../../server/app";
import { Bus } from "../../server/bus";
import { configFromEnv } from "../../server/config";
import { openDatabase } from "../../server/db/database";
import { freePort, startEmbeddedPostgres } from "../../server/db/embeddedPostgres";
import type { AppDeps } from "../../server/deps";
import { hashSecret, SESSION_COOKIE, startSession } from "../../server/features/auth/service";
import { importLayout, registerNode } from "../../server/features/layouts/service";
import { attachLiveSocket } from "../../server/features/live/socket";
import { createLogger } from "../../server/logger";
import { runtimeDeps } from "../../server/runtimeDeps";
import { poolFromDeps, startLiveRuntime } from "../../server/runtime/liveRuntime";

type Report = (name: string, value: number, unit: string) => void;

const SLUG = "moor-yard-panel";
const DETECTORS = 100;
const SIGNALS = 40;
const LINES = 4;
const RATE_PER_S = 200;
const SECONDS = 8;
const DRAIN_GRACE_MS = 3_000;
const CHROMIUM_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking", "--disable-component-update", "--disable-sync"];

const pad = (n: number) => String(n).padStart(3, "0");
const detectorId = (k: number) => `D${pad(k)}`;
const signalId = (i: number) => `S${pad(i)}`;
/** Detector k toggles signal k mod 40: consecutive pulses for one signal are 40+ pulses apart. */
const signalOf = (k: number) => k % SIGNALS;

function benchLayout(): LayoutFile {
  const perLine = DETECTORS / LINES;
  const lineOf = (k: number) => `L${Math.floor(k / perLine) + 1}`;
  return {
    format: LAYOUT_FORMAT,
    slug: SLUG,
    name: "Moor Yard test panel",
    scale: { name: "G", ratio: 22.5 },
    lines: Array.from({ length: LINES }, (_, i) => ({ id: `L${i + 1}`, name: `Test road ${i + 1}` })),
    detectors: Array.from({ length: DETECTORS }, (_, k) => ({ id: detectorId(k), name: `Test detector ${k}`, line: lineOf(k), at: (k % perLine) * 2 + 1 })),
    signals: Array.from({ length: SIGNALS }, (_, i) => ({ id: signalId(i), name: `Test signal ${i}`, line: `L${Math.floor(i / (SIGNALS / LINES)) + 1}`, at: (i % (SIGNALS / LINES)) * 5 + 2, aspects: ["danger", "clear"] })),
    points: [],
    nodes: [],
    rulebook: {
      format: "blocklight.rulebook/1",
      latches: Object.fromEntries(Array.from({ length: SIGNALS }, (_, i) => [`lit${i}`, false])),
      counters: {},
      selectors: {},
      initial: Object.fromEntries(Array.from({ length: SIGNALS }, (_, i) => [signalId(i), "danger"])),
      rules: Array.from({ length: DETECTORS }, (_, k) => {
        const i = signalOf(k);
        return [
          { id: `on-${k}`, on: { pass: detectorId(k) }, if: { not: { latch: `lit${i}` } }, do: [{ set: `lit${i}` }, { show: signalId(i), aspect: "clear" }] },
          { id: `off-${k}`, on: { pass: detectorId(k) }, if: { latch: `lit${i}` }, do: [{ clear: `lit${i}` }, { show: signalId(i), aspect: "danger" }] },
        ];
      }).flat(),
    },
  } as LayoutFile;
}

function percentile(sorted: number[], p: number): number {
  if (sorted.length === 0) return Number.NaN;
  return sorted[Math.min(sorted.length - 1, Math.floor((p / 100) * sorted.length))];
}
const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

/** The chunk and every chunk it imports statically (Vite writes `from"./x.js"` / `import"./x.js"`). */
function closure(dist: string, start: string[]): Set<string> {
  const seen = new Set<string>();
  const queue = [...start];
  while (queue.length > 0) {
    const file = queue.pop()!;
    if (seen.has(file)) continue;
    seen.add(file);
    const code = fs.readFileSync(path.join(dist, file), "utf8");
    for (const m of code.matchAll(/(?:from|import)\s*"\.\/([^"]+\.js)"/g)) queue.push(path.join(path.dirname(file), m[1]));
  }
  return seen;
}

/** Gzipped bytes of the JS the browser loads before the first page renders. */
function firstLoadJs(dist: string): { firstLoad: number; all: number; livePage: number } {
  const html = fs.readFileSync(path.join(dist, "index.html"), "utf8");
  const refs = [...html.matchAll(/(?:src|href)="\/?(assets\/[^"]+\.js)"/g)].map((m) => m[1]);
  const gz = (file: string) => zlib.gzipSync(fs.readFileSync(path.join(dist, file)), { level: 9 }).length;
  const all = fs
    .readdirSync(path.join(dist, "assets"))
    .filter((f) => f.endsWith(".js"))
    .reduce((sum, f) => sum + gz(path.join("assets", f)), 0);
  const livePageChunk = fs.readdirSync(path.join(dist, "assets")).find((f) => f.startsWith("LivePage-") && f.endsWith(".js"));
  const livePage = livePageChunk ? [...closure(dist, [...refs, path.join("assets", livePageChunk)])].reduce((sum, f) => sum + gz(f), 0) : Number.NaN;
  return { firstLoad: [...new Set(refs)].reduce((sum, f) => sum + gz(f), 0), all, livePage };
}

export async function run(report: Report): Promise<void> {
  const dist = path.resolve("dist");
  if (!fs.existsSync(path.join(dist, "index.html"))) throw new Error("dist/ is not built: run `npx vite build` first");
  const sizes = firstLoadJs(dist);
  report("ui-first-load-js-gzip", Math.round(sizes.firstLoad / 102.4) / 10, "KB");
  report("ui-live-page-js-gzip", Math.round(sizes.livePage / 102.4) / 10, "KB");
  report("ui-all-js-gzip", Math.round(sizes.all / 102.4) / 10, "KB");

  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-bench-ui-"));
  const pg = await startEmbeddedPostgres({ dataDir, port: await freePort() });
  const cleanups: (() => Promise<unknown> | unknown)[] = [() => pg.stop(), () => fs.rmSync(dataDir, { recursive: true, force: true })];
  try {
    const db = await openDatabase(pg.url);
    cleanups.unshift(() => db.close());
    const config = { ...configFromEnv({}), sessionSecret: "bench-ui-secret", serveClient: true };
    const deps: AppDeps = { config, db, logger: createLogger("silent"), bus: new Bus() };
    const user = await db.models.User.create({ email: "signaller@fernmoor.example", name: "Bench signaller", role: "signaller", passwordHash: await hashSecret("bench") });
    await importLayout(deps, benchLayout(), null);
    const boards: { id: string; detectors: number[] }[] = Array.from({ length: LINES }, (_, b) => ({
      id: `panel-${b + 1}`,
      detectors: Array.from({ length: DETECTORS / LINES }, (_, j) => b * (DETECTORS / LINES) + j),
    }));
    const secrets = new Map<string, string>();
    for (const b of boards) {
      const { secret } = await registerNode(deps, SLUG, { id: b.id, name: `Test panel board ${b.id}`, detectors: b.detectors.map(detectorId), signals: [] });
      secrets.set(b.id, secret);
    }

    const authPool = poolFromDeps(deps, 2);
    cleanups.unshift(() => authPool.end());
    const serverPassword = "bench-ui-server-password";
    const broker = await startBroker({ port: 0, authenticate: databaseAuthenticator({ pool: authPool, serverUsername: "blocklight-server", serverPassword }) });
    cleanups.unshift(() => broker.close());
    const mqttUrl = `mqtt://127.0.0.1:${broker.port}`;
    const runtime = await startLiveRuntime({ deps: runtimeDeps(deps), db: deps.db, mqtt: { url: mqttUrl, username: "blocklight-server", password: serverPassword } });
    cleanups.unshift(() => runtime.stop());
    deps.live = runtime;
    const server = http.createServer(createApp(deps));
    await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
    const sockets = attachLiveSocket(server, deps);
    cleanups.unshift(() => new Promise<void>((resolve) => server.close(() => resolve())));
    cleanups.unshift(() => sockets.close());
    const baseUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;

    const clients = new Map<string, mqtt.MqttClient>();
    for (const b of boards) {
      const c = await mqtt.connectAsync(mqttUrl, { protocolVersion: 4, username: b.id, password: secrets.get(b.id), clientId: `${SLUG}.${b.id}` });
      (c.stream as { setNoDelay?: (on: boolean) => void }).setNoDelay?.(true);
      clients.set(b.id, c);
    }
    cleanups.unshift(() => Promise.all([...clients.values()].map((c) => c.endAsync())));

    const profile = fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-bench-chromium-"));
    const context = await chromium.launchPersistentContext(profile, { executablePath: "/usr/bin/chromium", args: CHROMIUM_ARGS, viewport: { width: 1600, height: 1000 } });
    cleanups.unshift(async () => {
      await context.close();
      fs.rmSync(profile, { recursive: true, force: true });
    });
    await context.addCookies([{ name: SESSION_COOKIE, value: (await startSession(deps, user)).token, url: baseUrl }]);
    const page = await context.newPage();
    await page.goto(`${baseUrl}/layouts/${SLUG}/live`);
    await page.locator('[data-connection="live"]').first().waitFor({ timeout: 20_000 });
    await page.locator(`svg [data-signal="${signalId(SIGNALS - 1)}"]`).waitFor();

    // In the page: every data-aspect change, time-stamped at the next animation frame (when it
    // is painted), and a frame counter.
    // A string, not a function: tsx's name helpers do not exist inside the page.
    await page.evaluate(`(() => {
      window.__seen = [];
      window.__frames = 0;
      const pending = [];
      const frame = () => {
        window.__frames++;
        const at = Date.now();
        for (const p of pending.splice(0)) window.__seen.push({ signal: p.signal, aspect: p.aspect, at });
        requestAnimationFrame(frame);
      };
      requestAnimationFrame(frame);
      new MutationObserver((records) => {
        for (const r of records) {
          const signal = r.target.getAttribute("data-signal");
          if (signal && r.attributeName === "data-aspect") pending.push({ signal, aspect: r.target.getAttribute("data-aspect") || "" });
        }
      }).observe(document.querySelector("svg"), { subtree: true, attributes: true, attributeFilter: ["data-aspect"] });
    })()`);

    const idleStart = (await page.evaluate("window.__frames")) as number;
    await sleep(2_000);
    report("ui-fps-idle", Math.round((((await page.evaluate("window.__frames")) as number) - idleStart) / 2), "frames/s");

    // The floor: the same pushes seen by a socket.io client in this process (no browser).
    const probe = ioClient(baseUrl, { transports: ["websocket"], extraHeaders: { cookie: `${SESSION_COOKIE}=${(await startSession(deps, user)).token}` } });
    cleanups.unshift(() => probe.close());
    await new Promise<void>((resolve, reject) => {
      probe.once("connect", () => resolve());
      probe.once("connect_error", reject);
    });
    await new Promise((resolve) => probe.emit("live:join", { slug: SLUG }, resolve));
    const probeSeen = new Map<string, number>();
    probe.on("live:update", (u: LiveUpdate) => {
      const now = Date.now();
      for (const { event } of u.steps) if (event?.kind === "pulse" && event.node && event.seq) probeSeen.set(`${event.node}:${event.seq}`, now);
    });
    const sentAtBySeq = new Map<string, number>();

    // Send: detectors in turn, 200 per second, spread over the four boards.
    const boot = `ui${Date.now().toString(36)}`;
    const seqs = new Map<string, number>();
    const sentBySignal = new Map<string, number[]>();
    const expected = new Map<string, string>(Array.from({ length: SIGNALS }, (_, i) => [signalId(i), "danger"]));
    const total = RATE_PER_S * SECONDS;
    // UI_BENCH_PROFILE=1: print where the renderer spends its time while loaded (timeline trace).
    const cdp = process.env.UI_BENCH_PROFILE ? await context.newCDPSession(page) : null;
    const traceEvents: { name: string; dur?: number; ph: string; tid: number }[] = [];
    let traceDone: Promise<void> = Promise.resolve();
    const cpu = process.env.UI_BENCH_CPU ? await context.newCDPSession(page) : null;
    if (cpu) {
      await cpu.send("Profiler.enable");
      await cpu.send("Profiler.start");
    }
    if (cdp) {
      // The CDP event names are not in playwright-core's typings.
      const events = cdp as unknown as { on(e: string, f: (p: { value: typeof traceEvents }) => void): void; once(e: string, f: () => void): void };
      events.on("Tracing.dataCollected", (e) => traceEvents.push(...e.value));
      traceDone = new Promise((resolve) => events.once("Tracing.tracingComplete", () => resolve()));
      await cdp.send("Tracing.start", { categories: "devtools.timeline,disabled-by-default-devtools.timeline", transferMode: "ReportEvents" });
    }
    const framesBefore = (await page.evaluate("window.__frames")) as number;
    const begin = performance.now();
    let sent = 0;
    while (sent < total) {
      const due = Math.min(total, Math.floor(((performance.now() - begin) / 1000) * RATE_PER_S) + 1);
      for (; sent < due; sent++) {
        const k = sent % DETECTORS;
        const board = boards[Math.floor(k / (DETECTORS / LINES))].id;
        const seq = (seqs.get(board) ?? 0) + 1;
        seqs.set(board, seq);
        const signal = signalId(signalOf(k));
        expected.set(signal, expected.get(signal) === "danger" ? "clear" : "danger");
        const list = sentBySignal.get(signal) ?? [];
        list.push(Date.now());
        sentAtBySeq.set(`${board}:${seq}`, Date.now());
        sentBySignal.set(signal, list);
        clients.get(board)!.publish(`blocklight/v1/${SLUG}/node/${board}/pulse`, `{"detector":"${detectorId(k)}","seq":${seq},"boot":"${boot}"}`, { qos: 1 });
      }
      await sleep(2);
    }
    const framesAfter = (await page.evaluate("window.__frames")) as number;
    const sendSeconds = (performance.now() - begin) / 1000;
    report("ui-fps-at-200-pulses-per-s", Math.round(((framesAfter - framesBefore) / sendSeconds) * 10) / 10, "frames/s");
    if (cpu) {
      const { profile } = (await cpu.send("Profiler.stop")) as { profile: { nodes: { id: number; hitCount?: number; callFrame: { functionName: string; url: string; lineNumber: number; columnNumber: number } }[] } };
      const self = new Map<string, number>();
      for (const n of profile.nodes) {
        const key = `${n.callFrame.functionName || "(anon)"} ${n.callFrame.url.split("/").pop()}:${n.callFrame.lineNumber}:${n.callFrame.columnNumber}`;
        self.set(key, (self.get(key) ?? 0) + (n.hitCount ?? 0));
      }
      const hits = [...self.values()].reduce((a, b) => a + b, 0);
      for (const [key, n] of [...self].sort((a, b) => b[1] - a[1]).slice(0, 25)) process.stdout.write(`  ${((n / hits) * 100).toFixed(1)}% ${key}\n`);
    }
    if (cdp) {
      await cdp.send("Tracing.end");
      await traceDone;
      const byName = new Map<string, number>();
      for (const e of traceEvents) if (e.ph === "X" && e.dur) byName.set(e.name, (byName.get(e.name) ?? 0) + e.dur / 1000);
      for (const [name, ms] of [...byName].sort((a, b) => b[1] - a[1]).slice(0, 20)) process.stdout.write(`  ${ms.toFixed(0)} ms ${name}\n`);
    }
    const drainUntil = Date.now() + DRAIN_GRACE_MS;
    let seen: { signal: string; aspect: string; at: number }[] = [];
    while (Date.now() < drainUntil) {
      seen = (await page.evaluate("window.__seen")) as typeof seen;
      if (seen.length >= total) break;
      await sleep(100);
    }
    const floor = [...sentAtBySeq].flatMap(([key, at]) => (probeSeen.has(key) ? [probeSeen.get(key)! - at] : [])).sort((a, b) => a - b);
    report("ui-server-pulse-to-socket-p50", Math.round(percentile(floor, 50) * 10) / 10, "ms");
    report("ui-server-pulse-to-socket-p99", Math.round(percentile(floor, 99) * 10) / 10, "ms");
    // No update lost: the page's state has reached the server's version for this layout.
    const serverVersion = (await runtime.liveState(SLUG)).version;
    const pageVersion = Number(await page.locator("[data-live-version]").first().getAttribute("data-live-version"));
    report("ui-versions-behind-at-end", serverVersion - pageVersion, "updates");
    const latencies: number[] = [];
    const seenBySignal = new Map<string, number[]>();
    for (const s of seen) seenBySignal.set(s.signal, [...(seenBySignal.get(s.signal) ?? []), s.at]);
    let dropped = 0;
    for (const [signal, sentTimes] of sentBySignal) {
      const seenTimes = seenBySignal.get(signal) ?? [];
      dropped += Math.max(0, sentTimes.length - seenTimes.length);
      for (let i = 0; i < Math.min(sentTimes.length, seenTimes.length); i++) latencies.push(seenTimes[i] - sentTimes[i]);
    }
    const finals = (await page.evaluate(
      `Object.fromEntries([...document.querySelectorAll("svg [data-signal]")].map((el) => [el.getAttribute("data-signal"), el.getAttribute("data-aspect")]))`,
    )) as Record<string, string>;
    const wrongFinal = [...expected].filter(([signal, aspect]) => finals[signal] !== aspect).length;
    latencies.sort((a, b) => a - b);
    report("ui-pulses-sent", total, "pulses");
    report("ui-aspect-changes-seen", seen.length, "changes");
    // Two flips of one signal inside one frame are painted as one: not lost, just not seen.
    report("ui-aspect-flips-not-painted", dropped, "changes");
    report("ui-signals-with-wrong-final-aspect", wrongFinal, "signals");
    report("ui-pulse-to-visible-aspect-p50", Math.round(percentile(latencies, 50) * 10) / 10, "ms");
    report("ui-pulse-to-visible-aspect-p99", Math.round(percentile(latencies, 99) * 10) / 10, "ms");
    await page.screenshot({ path: path.resolve("tests/artifacts/bench-live-page.png") }).catch(() => {});
  } finally {
    for (const cleanup of cleanups) {
      try {
        await cleanup();
      } catch {
        // keep cleaning up
      }
    }
  }
}
