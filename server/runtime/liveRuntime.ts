/**
 * The live pipeline of the whole server: one MQTT connection to the broker, one runner per
 * layout with a live rulebook, and the bus listeners that switch rulebooks and reload nodes.
 *
 * The server's MQTT session is persistent (clean session off, a fixed client id), so QoS 1
 * pulses sent while the server is down or restarting wait in the broker and arrive when it
 * reconnects; anything not acknowledged (not committed) is redelivered.
 */
import mqtt, { type MqttClient } from "mqtt";
import pg from "pg";
import { TOPIC_ROOT, type CommandBody, type LiveState } from "../../shared/contract/live";
import { signalIds } from "../../shared/rulebook/engine";
import type { Rulebook } from "../../shared/rulebook/schema";
import type { AppDeps } from "../deps";
import { HttpError, notFound } from "../http/errors";
import { ingestMessage } from "./ingest";
import { deferAcks } from "./mqttAck";
import { mqttAspectPublisher } from "./publisher";
import { DEFAULT_RUNNER_OPTIONS, LayoutRunner, type CommandUser, type RunnerOptions } from "./runner";

/** Every board message of every layout. */
export const SERVER_SUBSCRIPTION = `${TOPIC_ROOT}/+/node/#`;
const RECONNECT_PERIOD_MS = 1_000;

export interface LiveRuntimeOptions {
  deps: AppDeps;
  mqtt: { url: string; username: string; password: string; clientId?: string };
  /** The runtime's own connections; made from the app's database settings when absent. */
  pool?: pg.Pool;
  runner?: Partial<RunnerOptions>;
}

export interface LiveRuntime {
  connected(): boolean;
  /** Board messages received but not yet acknowledged to the broker (not yet committed). */
  pendingAcks(): number;
  runner(slug: string): LayoutRunner | undefined;
  liveState(slug: string): Promise<LiveState>;
  command(slug: string, body: CommandBody, user: CommandUser): Promise<LiveState>;
  session(slug: string, action: "open" | "close", user: CommandUser): Promise<LiveState>;
  /** Resolves when every runner has committed and published everything queued. */
  idle(): Promise<void>;
  /** Clean stop: drain the queues, then close the connections. */
  stop(): Promise<void>;
  /** Crash (tests): drop everything at once, acknowledging nothing more. */
  crash(): Promise<void>;
}

/** A pg pool on the same database as the app's Sequelize instance. */
export function poolFromDeps(deps: AppDeps, max = 4): pg.Pool {
  const c = deps.db.sequelize.config;
  return new pg.Pool({ host: c.host, port: Number(c.port), database: c.database, user: c.username, password: c.password ?? undefined, max });
}

export async function startLiveRuntime(options: LiveRuntimeOptions): Promise<LiveRuntime> {
  const { deps } = options;
  const ownPool = !options.pool;
  const pool = options.pool ?? poolFromDeps(deps);
  // A connection the server ended (e.g. during an outage) must not crash the process.
  pool.on("error", (err) => deps.logger.warn({ err }, "live pipeline database connection lost"));
  const runnerOptions: RunnerOptions = { ...DEFAULT_RUNNER_OPTIONS, ...options.runner };
  const runners = new Map<string, LayoutRunner>();
  const byId = new Map<number, LayoutRunner>();

  const client: MqttClient = mqtt.connect(options.mqtt.url, {
    protocolVersion: 4,
    clientId: options.mqtt.clientId ?? "blocklight-server",
    clean: false,
    username: options.mqtt.username,
    password: options.mqtt.password,
    reconnectPeriod: RECONNECT_PERIOD_MS,
    manualConnect: true,
  });
  const acks = deferAcks(client);
  const publisher = mqttAspectPublisher(client, (err) => deps.logger.warn({ err }, "aspect publish failed"));

  const startRunner = async (layout: { id: number; slug: string }) => {
    const runner = new LayoutRunner(deps, pool, publisher, layout, runnerOptions);
    await runner.start();
    runners.set(layout.slug, runner);
    byId.set(layout.id, runner);
    return runner;
  };

  // Messages that arrive before the runners are ready wait here, in order.
  let ready = false;
  const early: { packet: Parameters<MqttClient["handleMessage"]>[0]; ack: () => void; at: number }[] = [];
  const route = (packet: Parameters<MqttClient["handleMessage"]>[0], ack: () => void, receivedAt: number) => {
    const payload = Buffer.isBuffer(packet.payload) ? packet.payload : Buffer.from(packet.payload);
    const result = ingestMessage(packet.topic, payload, (slug) => runners.get(slug)?.nodeDirectory());
    const runner = result.slug ? runners.get(result.slug) : undefined;
    if (!runner) {
      deps.logger.warn({ topic: packet.topic, reason: result.ok ? "no runner" : result.reason }, "MQTT message for no live layout: logged only");
      ack();
      return;
    }
    runner.message({ topic: packet.topic, payload, retain: packet.retain, receivedAt, result, ack });
  };
  client.handleMessage = (packet, callback) => {
    const ack = acks.hold(packet);
    const receivedAt = Date.now();
    if (ready) route(packet, ack, receivedAt);
    else early.push({ packet, ack, at: receivedAt });
    callback();
  };

  let everConnected = false;
  client.on("connect", () => {
    // See broker/server.ts: without this each small packet can wait ~40 ms for a delayed ACK.
    (client.stream as { setNoDelay?: (on: boolean) => void }).setNoDelay?.(true);
    client.subscribe(SERVER_SUBSCRIPTION, { qos: 1 }, (err) => {
      if (err) deps.logger.error({ err }, "could not subscribe to board messages");
    });
    if (everConnected) for (const runner of runners.values()) runner.republish();
    everConnected = true;
    deps.logger.info({ url: options.mqtt.url }, "live pipeline connected to the MQTT broker");
  });
  client.on("error", (err) => deps.logger.warn({ err: err.message }, "MQTT client error"));

  const { rows } = await pool.query<{ id: number; slug: string }>(`SELECT id, slug FROM layouts WHERE live_version IS NOT NULL AND archived_at IS NULL ORDER BY id`);
  client.connect();
  for (const layout of rows) await startRunner(layout);
  ready = true;
  for (const m of early.splice(0)) route(m.packet, m.ack, m.at);

  const onPublished = ({ layoutId, slug, version }: { layoutId: number; slug: string; version: number }) => {
    void (async () => {
      try {
        const existing = byId.get(layoutId);
        if (!existing) {
          await startRunner({ id: layoutId, slug });
          return;
        }
        const { rows: rb } = await pool.query<{ rulebook: Rulebook }>(`SELECT rulebook FROM rulebook_versions WHERE layout_id = $1 AND version = $2`, [
          layoutId,
          version,
        ]);
        if (rb[0] && existing.rulebookVersion !== version) await existing.switchRulebook(version, rb[0].rulebook, null);
      } catch (err) {
        deps.logger.error({ err, slug, version }, "could not switch the live rulebook");
      }
    })();
  };
  const onNodes = ({ layoutId }: { layoutId: number }) => void byId.get(layoutId)?.loadNodes().catch((err) => deps.logger.error({ err }, "could not reload nodes"));
  // Seam for archive/restore (server/features/layouts/edit.ts): an archived layout stops at
  // once with every signal at danger; a restored one starts again from its stored state.
  const onArchived = ({ layoutId, slug }: { layoutId: number; slug: string }) => {
    const runner = byId.get(layoutId);
    if (!runner) return;
    runners.delete(slug);
    byId.delete(layoutId);
    void runner.retire("the layout was archived").catch((err) => deps.logger.error({ err, slug }, "could not stop an archived layout"));
  };
  const onRestored = ({ layoutId, slug }: { layoutId: number; slug: string }) => {
    void (async () => {
      const { rows: live } = await pool.query<{ live_version: number | null }>(`SELECT live_version FROM layouts WHERE id = $1`, [layoutId]);
      if (!byId.has(layoutId) && live[0]?.live_version != null) await startRunner({ id: layoutId, slug });
    })().catch((err) => deps.logger.error({ err, slug }, "could not start a restored layout"));
  };
  deps.bus.on("rulebook.published", onPublished);
  deps.bus.on("layout.nodes-changed", onNodes);
  deps.bus.on("layout.archived", onArchived);
  deps.bus.on("layout.restored", onRestored);

  const need = (slug: string) => {
    const runner = runners.get(slug);
    if (!runner) throw notFound(`live layout "${slug}"`);
    return runner;
  };
  const detach = () => {
    deps.bus.off("rulebook.published", onPublished);
    deps.bus.off("layout.nodes-changed", onNodes);
    deps.bus.off("layout.archived", onArchived);
    deps.bus.off("layout.restored", onRestored);
  };

  return {
    connected: () => client.connected,
    pendingAcks: () => acks.pending(),
    runner: (slug) => runners.get(slug),
    liveState: (slug) => need(slug).liveState(),
    async command(slug, body, user) {
      const runner = need(slug);
      const unknown =
        "signal" in body && !signalIds(runner.rulebook).includes(body.signal)
          ? { path: "$.signal", message: `the live rulebook has no signal "${body.signal}"` }
          : "latch" in body && !(body.latch in runner.rulebook.latches)
            ? { path: "$.latch", message: `the live rulebook has no latch "${body.latch}"` }
            : "counter" in body && !(body.counter in runner.rulebook.counters)
              ? { path: "$.counter", message: `the live rulebook has no counter "${body.counter}"` }
              : null;
      if (unknown) throw new HttpError(400, "invalid_input", "the command names something the live rulebook does not have", [unknown]);
      try {
        await runner.command(body, user);
      } catch (err) {
        throw new HttpError(409, "conflict", (err as Error).message);
      }
      return runner.liveState();
    },
    async session(slug, action, user) {
      const runner = need(slug);
      await runner.sessionControl(action, user);
      return runner.liveState();
    },
    async idle() {
      await Promise.all([...runners.values()].map((r) => r.idle()));
    },
    async stop() {
      detach();
      for (const runner of runners.values()) await runner.stop();
      await new Promise<void>((resolve) => client.end(false, {}, () => resolve()));
      if (ownPool) await pool.end();
    },
    async crash() {
      detach();
      for (const runner of runners.values()) runner.abandon();
      // No DISCONNECT, no flush: the broker sees the connection drop, as if the process died.
      client.options.reconnectPeriod = 0;
      (client as unknown as { stream?: { destroy(): void } }).stream?.destroy();
      client.end(true);
      if (ownPool) await pool.end().catch(() => {});
    },
  };
}
