/**
 * The live pipeline for tests: a real aedes broker in-process on a free port (authenticating
 * against the test database), the runtime connected to it, the app on a real HTTP port with
 * socket.io, and helpers for boards and browsers.
 */
import http from "node:http";
import type { AddressInfo } from "node:net";
import { randomBytes } from "node:crypto";
import mqtt, { type MqttClient } from "mqtt";
import type pg from "pg";
import { io as ioClient, type Socket } from "socket.io-client";
import { databaseAuthenticator } from "../../broker/auth";
import { watchNodeCredentials, type CredentialWatch } from "../../broker/credentialWatch";
import { ReferenceBoard, type ReferenceBoardOptions } from "../../broker/referenceBoard";
import { startBroker, type BrokerRefusal, type RunningBroker } from "../../broker/server";
import type { ClientToServerEvents, LiveState, LiveUpdate, ServerToClientEvents, AspectPayload } from "@shared/contract/live";
import { attachLiveSocket } from "../../server/features/live/socket";
import { poolFromDeps, startLiveRuntime, type LiveRuntime } from "../../server/runtime/liveRuntime";
import type { RunnerOptions } from "../../server/runtime/runner";
import { runtimeDeps } from "../../server/runtimeDeps";
import type { TestApp } from "./testApp";
import type { ManualClock } from "./manualClock";
import { waitFor } from "./waitFor";

export const SERVER_MQTT_USERNAME = "blocklight-server";

export interface LiveHarness {
  broker: RunningBroker;
  /** Drops boards whose secret was re-issued or whose node was removed, as the broker process does. */
  credentials: CredentialWatch;
  runtime: LiveRuntime;
  refusals: BrokerRefusal[];
  mqttUrl: string;
  httpUrl: string;
  serverPassword: string;
  /** Starts a fresh runtime on the same database and broker (after stop or crash), with the harness's runner options and these over them. */
  startRuntime(options?: Partial<RunnerOptions>): Promise<LiveRuntime>;
  close(): Promise<void>;
}

/**
 * `using.pool`: the pool the runtime runs on (the harness does not end it), e.g. one whose
 * chosen queries a test holds back (tests/support/queryGate.ts); by default its own.
 */
export async function startLiveHarness(t: TestApp, runner: Partial<RunnerOptions> = {}, using: { pool?: pg.Pool } = {}): Promise<LiveHarness> {
  const serverPassword = randomBytes(12).toString("hex");
  // One connection of the pool stays with the credential watch's LISTEN.
  const authPool: pg.Pool = poolFromDeps(t.deps, 3);
  authPool.on("error", () => {}); // connections ended by an outage test
  const refusals: BrokerRefusal[] = [];
  const broker = await startBroker({
    port: 0,
    authenticate: databaseAuthenticator({ pool: authPool, serverUsername: SERVER_MQTT_USERNAME, serverPassword }),
    onRefusal: (r) => refusals.push(r),
  });
  const credentials = watchNodeCredentials({ pool: authPool, broker });
  const mqttUrl = `mqtt://127.0.0.1:${broker.port}`;
  const startRuntime = async (options: Partial<RunnerOptions> = {}) => {
    const runtime = await startLiveRuntime({
      deps: runtimeDeps(t.deps),
      db: t.deps.db,
      pool: using.pool,
      mqtt: { url: mqttUrl, username: SERVER_MQTT_USERNAME, password: serverPassword },
      runner: { ...runner, ...options },
    });
    t.deps.live = runtime;
    t.deps.broker = runtime;
    harness.runtime = runtime;
    await waitFor(() => runtime.connected(), "the runtime to connect");
    return runtime;
  };
  const server = http.createServer(t.app);
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  const sockets = attachLiveSocket(server, t.deps);
  const harness: LiveHarness = {
    broker,
    credentials,
    runtime: undefined as unknown as LiveRuntime,
    refusals,
    mqttUrl,
    httpUrl: `http://127.0.0.1:${(server.address() as AddressInfo).port}`,
    serverPassword,
    startRuntime,
    async close() {
      await harness.runtime.stop().catch(() => {});
      await sockets.close();
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await credentials.stop();
      await broker.close();
      await authPool.end();
    },
  };
  await startRuntime();
  return harness;
}

/** Longer than any test moves a ManualClock at once (see `onManualClock`). */
const MANUAL_FAILSAFE_MS = 10 * 60_000;

/**
 * Runner options for a test on a hand-driven clock: quiet triggers, session idle, the reorder
 * wait and the watchdog fire on `clock.advance`. The watchdog's fail-safe is set longer than
 * any advance: a jump of the clock while a real probe query is in flight would otherwise look
 * like a database that stopped answering. A test of the fail-safe sets its own (`over`).
 */
export function onManualClock(clock: ManualClock, over: Partial<RunnerOptions> = {}): Partial<RunnerOptions> {
  return { now: clock.now, after: clock.after, failsafeAfterMs: MANUAL_FAILSAFE_MS, ...over };
}

// The live tests' one wait for real I/O (tests/support/waitFor.ts), imported from here by most of them.
export { waitFor } from "./waitFor";

/**
 * A test board: the reference board (broker/referenceBoard.ts), so every test board does the
 * board duties of CONTRACT.md §2 — client id `{layout}.{node}`, clean session off, the four
 * subscriptions, keep-until-applied and resend after every reconnect, fail-safe.
 */
export interface Board {
  readonly board: ReferenceBoard;
  /** The mqtt.js client of the current connection. */
  readonly client: MqttClient;
  /** Newest aspect command per signal. */
  aspects: Map<string, AspectPayload>;
  /** What the board shows per signal (danger while in fail-safe). */
  shown: Map<string, string>;
  seq: number;
  boot: string;
  pulse(detector: string): Promise<void>;
  /** Once, as it is (no numbering, not kept): odd payloads, lamp-proving reports. */
  publish(topic: string, payload: string | Buffer): Promise<void>;
  end(): Promise<void>;
}

export async function connectBoard(
  mqttUrl: string,
  layout: string,
  node: string,
  secret: string,
  // `subscribe` is accepted for older tests: a reference board always subscribes (duty 2).
  options: { boot?: string; signals?: string[]; announce?: boolean; subscribe?: boolean } & Pick<ReferenceBoardOptions, "drives" | "pointsMoveMs" | "pointsStuck"> = {},
): Promise<Board> {
  const { boot, signals, drives, pointsMoveMs, pointsStuck } = options;
  const board = new ReferenceBoard({ url: mqttUrl, layout, node, secret, boot, signals, drives, pointsMoveMs, pointsStuck, announce: options.announce ?? false });
  await forgetSession(mqttUrl, board.clientId, node, secret);
  await board.start();
  return {
    board,
    get client() {
      return board.client;
    },
    aspects: board.aspects,
    shown: board.shown,
    get seq() {
      return board.seq;
    },
    set seq(value: number) {
      board.seq = value;
    },
    get boot() {
      return board.boot;
    },
    set boot(value: string) {
      board.boot = value;
    },
    pulse: (detector) => board.pulse(detector),
    publish: (topic, payload) => board.publishRaw(topic, payload),
    end: () => board.end(),
  };
}

/**
 * A test board is a board fresh from the box: the persistent session an earlier test's board
 * of the same node left at the broker (with the commands queued for it since) is discarded
 * first, by one clean-session connect.
 */
async function forgetSession(url: string, clientId: string, node: string, secret: string): Promise<void> {
  const client = await mqtt.connectAsync(url, { protocolVersion: 4, clientId, username: node, password: secret, clean: true, reconnectPeriod: 0 }).catch(() => null);
  await client?.endAsync();
}

/** A browser: a socket.io client with the session cookie of a signed-in agent (or none). */
export async function connectBrowser(httpUrl: string, cookie?: string): Promise<{ socket: Socket<ServerToClientEvents, ClientToServerEvents>; updates: LiveUpdate[] }> {
  const socket: Socket<ServerToClientEvents, ClientToServerEvents> = ioClient(httpUrl, {
    transports: ["websocket"],
    extraHeaders: cookie ? { cookie } : {},
    reconnection: false,
  });
  await new Promise<void>((resolve, reject) => {
    socket.once("connect", () => resolve());
    socket.once("connect_error", reject);
  });
  const updates: LiveUpdate[] = [];
  socket.on("live:update", (u) => updates.push(u));
  return { socket, updates };
}

export function join(socket: Socket<ServerToClientEvents, ClientToServerEvents>, slug: string, displayToken?: string) {
  return new Promise<{ ok: true; data: LiveState } | { ok: false; error: { code: string; message: string } }>((resolve) =>
    socket.emit("live:join", { slug, ...(displayToken ? { displayToken } : {}) }, resolve),
  );
}

/** Boards of the Kestrel Bank demo as the live tests register them: id, detectors, signals. */
export const KESTREL_BOARDS = {
  bankFoot: ["bank-foot", ["MA"], []],
  junction: ["junction", ["ME", "JX"], ["M1"]],
  quarry: ["quarry", ["BA", "BE"], ["B1"]],
  shed: ["shed", ["SA", "SE"], ["S1"]],
} as const satisfies Record<string, readonly [string, readonly string[], readonly string[]]>;

/**
 * Registers boards through the real API as an engineer and returns each board's secret,
 * which is shown only in that reply.
 */
export async function issueBoardSecrets(
  t: TestApp,
  slug: string,
  boards: readonly (readonly [string, readonly string[], readonly string[]])[],
): Promise<Map<string, string>> {
  const engineer = await t.signIn("engineer");
  const secrets = new Map<string, string>();
  for (const [id, detectors, signals] of boards) {
    const res = await engineer.post(`/api/layouts/${slug}/nodes`).send({ id, name: id, detectors, signals });
    if (res.status !== 201) throw new Error(`registering board ${id} failed: ${res.status} ${JSON.stringify(res.body)}`);
    secrets.set(id, res.body.secret);
  }
  return secrets;
}
