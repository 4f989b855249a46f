/**
 * The live pipeline as separate processes, so faults are real: the broker (`broker/index.ts`)
 * and the server (`server/index.ts`) each run as a child process that a test can SIGKILL,
 * against a test database of the run's PostgreSQL; boards are reference boards in this
 * process. Used by tests/live/faults.test.ts and the faults bench.
 *
 * The layout is a counting bench of the (invented) Fernmoor society: each board serves one
 * detector, each pulse adds 1 to that board's counter, and one signal shows clear while the
 * layout is healthy, so a board's fail-safe is visible.
 */
import { spawn, type ChildProcess } from "node:child_process";
import { randomBytes } from "node:crypto";
import fs from "node:fs";
import net from "node:net";
import os from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { ReferenceBoard, type ReferenceBoardOptions } from "../../broker/referenceBoard";
import { freePort } from "../../server/db/embeddedPostgres";
import { LAYOUT_FORMAT, type LayoutFile } from "@shared/layout/schema";

const ROOT = fileURLToPath(new URL("../..", import.meta.url));
export const RIG_SLUG = "fernmoor-counting-bench";
const UP_TIMEOUT_MS = 60_000;

export function countingLayout(boards: number): LayoutFile {
  const ids = Array.from({ length: boards }, (_, i) => i + 1);
  return {
    format: LAYOUT_FORMAT,
    slug: RIG_SLUG,
    name: "Fernmoor counting bench",
    scale: { name: "G", ratio: 22.5 },
    lines: [{ id: "bench", name: "Bench line" }],
    detectors: ids.map((i) => ({ id: `C${i}`, name: `Counter ${i}`, line: "bench", at: i })),
    signals: [{ id: "S1", name: "Bench signal", line: "bench", at: 20, aspects: ["danger", "clear"] }],
    points: [],
    nodes: ids.map((i) => ({ id: `counter-${i}`, name: `Counter board ${i}`, detectors: [`C${i}`], signals: i === 1 ? ["S1"] : [] })),
    rulebook: {
      format: "blocklight.rulebook/1",
      latches: {},
      counters: Object.fromEntries(ids.map((i) => [`n${i}`, 0])),
      selectors: {},
      initial: { S1: "clear" },
      rules: ids.map((i) => ({ id: `count-${i}`, on: { pass: `C${i}` }, do: [{ add: `n${i}`, by: 1 }] })),
    },
  } as LayoutFile;
}

export interface Child {
  process: ChildProcess;
  output: string[];
}

function spawnChild(file: string, env: NodeJS.ProcessEnv): Child {
  // A stdin pipe and BLOCKLIGHT_SUPERVISED (server/parentWatch.ts): the child stops when this process goes, however it goes.
  const child = spawn(process.execPath, ["--import", "tsx", path.join(ROOT, file)], {
    cwd: ROOT,
    env: { ...process.env, ...env, BLOCKLIGHT_SUPERVISED: "1" },
    stdio: ["pipe", "pipe", "pipe"],
  });
  const output: string[] = [];
  const keep = (chunk: Buffer) => {
    output.push(chunk.toString());
    if (output.length > 200) output.shift();
  };
  child.stdout!.on("data", keep);
  child.stderr!.on("data", keep);
  return { process: child, output };
}

async function portOpen(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = net.connect(port, "127.0.0.1");
    socket.once("connect", () => {
      socket.destroy();
      resolve(true);
    });
    socket.once("error", () => resolve(false));
  });
}

async function until(what: string, check: () => Promise<boolean> | boolean, child: Child | null, timeoutMs = UP_TIMEOUT_MS): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!(await check())) {
    if (child && child.process.exitCode !== null) throw new Error(`${what}: the process exited (${child.process.exitCode})\n${child.output.join("")}`);
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}\n${child?.output.join("") ?? ""}`);
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
}

export interface RigOptions {
  databaseUrl: string;
  /** node id → secret */
  secrets: Map<string, string>;
}

export class FaultRig {
  readonly dataDir = fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-rig-"));
  readonly serverPassword = randomBytes(12).toString("hex");
  mqttPort = 0;
  httpPort = 0;
  broker: Child | null = null;
  server: Child | null = null;

  constructor(private readonly options: RigOptions) {}

  get mqttUrl(): string {
    return `mqtt://127.0.0.1:${this.mqttPort}`;
  }

  get httpUrl(): string {
    return `http://127.0.0.1:${this.httpPort}`;
  }

  private env(): NodeJS.ProcessEnv {
    return {
      DATABASE_URL: this.options.databaseUrl,
      MQTT_PORT: String(this.mqttPort),
      MQTT_URL: this.mqttUrl,
      PORT: String(this.httpPort),
      DATA_DIR: this.dataDir,
      DEMO: "off",
      SERVER_MQTT_PASSWORD: this.serverPassword,
      SESSION_SECRET: "rig-session-secret-not-for-real-use",
      LOG_LEVEL: "warn",
      VITEST: "",
    };
  }

  async startBroker(): Promise<void> {
    if (this.broker && this.broker.process.exitCode === null) throw new Error("a broker process is running already");
    this.mqttPort ||= await freePort();
    this.broker = spawnChild("broker/index.ts", this.env());
    await until("the broker to listen", () => portOpen(this.mqttPort), this.broker);
  }

  async startServer(): Promise<void> {
    if (this.server && this.server.process.exitCode === null) throw new Error("a server process is running already");
    this.httpPort ||= await freePort();
    this.server = spawnChild("server/index.ts", this.env());
    await until(
      "the server to answer",
      async () => {
        try {
          const res = await fetch(`${this.httpUrl}/api/health`, { signal: AbortSignal.timeout(1_000) });
          return ((await res.json()) as { db?: string }).db === "up";
        } catch {
          return false;
        }
      },
      this.server,
    );
  }

  /** kill -9: no shutdown hooks, no DISCONNECT, nothing flushed. */
  async kill(which: "broker" | "server"): Promise<void> {
    const child = this[which];
    if (!child || child.process.exitCode !== null) return;
    const exited = new Promise((resolve) => child.process.once("exit", resolve));
    child.process.kill("SIGKILL");
    await exited;
    if (this[which] === child) this[which] = null;
  }

  board(node: string, extra: Partial<ReferenceBoardOptions> = {}): ReferenceBoard {
    const secret = this.options.secrets.get(node);
    if (!secret) throw new Error(`no secret for ${node}`);
    return new ReferenceBoard({ url: this.mqttUrl, layout: RIG_SLUG, node, secret, signals: node === "counter-1" ? ["S1"] : [], announce: true, ...extra });
  }

  async close(): Promise<void> {
    for (const which of ["server", "broker"] as const) {
      const child = this[which];
      if (child && child.process.exitCode === null) {
        const exited = new Promise((resolve) => child.process.once("exit", resolve));
        child.process.kill("SIGTERM");
        await Promise.race([exited, new Promise((resolve) => setTimeout(resolve, 5_000))]);
        if (child.process.exitCode === null) child.process.kill("SIGKILL");
      }
    }
    fs.rmSync(this.dataDir, { recursive: true, force: true });
  }
}

/**
 * Sends `count` pulses from each board at `perSecond` pulses/s in all (spread over boards),
 * in 10 ms ticks; `at(ms)` hooks run once when the stream has run that long. Resolves when
 * every pulse has been handed to its board (not when covered).
 */
export async function stream(
  boards: { board: ReferenceBoard; detector: string }[],
  perSecond: number,
  seconds: number,
  hooks: { atMs: number; run: () => Promise<void> | void }[] = [],
): Promise<number[]> {
  const TICK_MS = 10;
  const perBoard = Math.round((perSecond * seconds) / boards.length);
  const sent = boards.map(() => 0);
  const started = Date.now();
  const pending = [...hooks].sort((a, b) => a.atMs - b.atMs);
  // Hooks run one after another (a restart must not overtake the kill before it).
  let chain: Promise<void> = Promise.resolve();
  for (;;) {
    const elapsed = Date.now() - started;
    while (pending.length && pending[0].atMs <= elapsed) {
      const hook = pending.shift()!;
      chain = chain.then(() => hook.run());
    }
    const due = Math.min(perBoard, Math.floor(((elapsed + TICK_MS) / 1000) * (perSecond / boards.length)));
    boards.forEach((b, i) => {
      for (; sent[i] < due; sent[i]++) void b.board.pulse(b.detector);
    });
    if (sent.every((n) => n >= perBoard) && pending.length === 0) break;
    await new Promise((resolve) => setTimeout(resolve, TICK_MS));
  }
  await chain;
  return sent;
}

export { until };
