/**
 * The server's MQTT client for ONE running layout (CONTRACT.md §2, duties of the server):
 * client id `blocklight-server.{layout}`, clean session off (QoS 1 messages sent while the
 * server is away wait in the broker), the Last Will `server/status` `{"online":false}`, and
 * `{"online":true,"at"}` retained on every connect and every second after (the heartbeat
 * boards watch). The heartbeat runs on its own timer: it never waits for the database.
 *
 * Board messages come in through `onMessage` with the PUBACK held back until the runner has
 * committed them (mqttAck.ts). The server's own `applied` confirmations come back on the
 * same subscription and are dropped here.
 */
import mqtt, { type IPublishPacket, type MqttClient } from "mqtt";
import { topics, type AppliedPayload, type AspectPayload, type PointsSetPayload, type ServerStatusPayload } from "@shared/contract/live";
import type { Aspect } from "@shared/rulebook/schema";
import type { Logger } from "../logger";
import { deferAcks } from "./mqttAck";

/** The heartbeat period (CONTRACT.md §2: every second while the layout runs). */
export const HEARTBEAT_MS = 1_000;
const RECONNECT_PERIOD_MS = 500;
const KEEPALIVE_S = 5;

export interface LayoutLinkOptions {
  url: string;
  username: string;
  password: string;
  slug: string;
  logger: Logger;
  now: () => number;
  onMessage(packet: IPublishPacket, payload: Buffer, ack: () => void, receivedAt: number): void;
  /** After every (re)connect and the online status: the runner commands every signal again. */
  onConnect(): void;
}

export interface LayoutLink {
  connected(): boolean;
  /** Since when the link has been down (null while connected). */
  downSince(): number | null;
  pendingAcks(): number;
  publishAspect(signal: string, aspect: Aspect, rev: number, at: number): void;
  /** Removes a signal's retained aspect from the broker (an empty retained message): the signal left the layout. */
  clearAspect(signal: string): void;
  publishApplied(node: string, payload: AppliedPayload): void;
  /** The rulebook's command to power-worked points (retained: a board that restarts moves them again). */
  publishPointsSet(points: string, to: PointsSetPayload["to"], rev: number, at: number): void;
  start(): void;
  /** Clean stop: offline status, then DISCONNECT (the will is not sent on a clean disconnect). */
  stop(): Promise<void>;
  /** Crash (tests): the connection drops as if the process died; the broker sends the will. */
  crash(): void;
}

export const serverClientId = (slug: string) => `blocklight-server.${slug}`;

export function connectLayoutLink(options: LayoutLinkOptions): LayoutLink {
  const { slug, logger } = options;
  const statusTopic = topics.serverStatus(slug);
  const offline: ServerStatusPayload = { online: false };
  const client: MqttClient = mqtt.connect(options.url, {
    protocolVersion: 4,
    clientId: serverClientId(slug),
    clean: false,
    keepalive: KEEPALIVE_S,
    username: options.username,
    password: options.password,
    reconnectPeriod: RECONNECT_PERIOD_MS,
    manualConnect: true,
    will: { topic: statusTopic, payload: Buffer.from(JSON.stringify(offline)), qos: 1, retain: true },
  });
  const acks = deferAcks(client);
  let heartbeat: NodeJS.Timeout | null = null;
  let down: number | null = options.now();
  const warn = (what: string) => (err?: Error | null) => {
    if (err) logger.warn({ err: err.message, slug }, what);
  };
  const publishStatus = () => {
    const payload: ServerStatusPayload = { online: true, at: new Date(options.now()).toISOString() };
    if (client.connected) client.publish(statusTopic, JSON.stringify(payload), { qos: 1, retain: true }, warn("server status publish failed"));
  };

  client.handleMessage = (packet, callback) => {
    const ack = acks.hold(packet);
    const receivedAt = options.now();
    if (packet.topic.endsWith("/applied")) ack(); // our own confirmations, echoed by the subscription
    else options.onMessage(packet, Buffer.isBuffer(packet.payload) ? packet.payload : Buffer.from(packet.payload), ack, receivedAt);
    callback();
  };
  client.on("connect", () => {
    down = null;
    // See broker/server.ts: without this each small packet can wait ~40 ms for a delayed ACK.
    (client.stream as { setNoDelay?: (on: boolean) => void }).setNoDelay?.(true);
    client.subscribe(topics.nodeFilter(slug), { qos: 1 }, warn("could not subscribe to board messages"));
    publishStatus();
    options.onConnect();
    logger.info({ slug, url: options.url }, "layout connected to the MQTT broker");
  });
  client.on("close", () => {
    down ??= options.now();
  });
  client.on("error", (err) => logger.warn({ err: err.message, slug }, "MQTT client error"));

  return {
    connected: () => client.connected,
    downSince: () => down,
    pendingAcks: () => acks.pending(),
    publishAspect(signal, aspect, rev, at) {
      const payload: AspectPayload = { aspect, rev, at: new Date(at).toISOString() };
      client.publish(topics.aspect(slug, signal), JSON.stringify(payload), { qos: 1, retain: true }, warn("aspect publish failed"));
    },
    clearAspect(signal) {
      client.publish(topics.aspect(slug, signal), "", { qos: 1, retain: true }, warn("aspect clear failed"));
    },
    publishPointsSet(points, to, rev, at) {
      const payload: PointsSetPayload = { to, rev, at: new Date(at).toISOString() };
      client.publish(topics.pointsSet(slug, points), JSON.stringify(payload), { qos: 1, retain: true }, warn("points set publish failed"));
    },
    publishApplied(node, payload) {
      if (client.connected) client.publish(topics.applied(slug, node), JSON.stringify(payload), { qos: 1, retain: true }, warn("applied publish failed"));
    },
    start() {
      client.connect();
      heartbeat = setInterval(publishStatus, HEARTBEAT_MS);
      heartbeat.unref?.();
    },
    async stop() {
      if (heartbeat) clearInterval(heartbeat);
      if (client.connected) {
        await client.publishAsync(statusTopic, JSON.stringify(offline), { qos: 1, retain: true }).catch(() => undefined);
      }
      await new Promise<void>((resolve) => client.end(false, {}, () => resolve()));
    },
    crash() {
      if (heartbeat) clearInterval(heartbeat);
      // No DISCONNECT, no flush: the broker sees the connection drop and publishes the will.
      client.options.reconnectPeriod = 0;
      (client as unknown as { stream?: { destroy(): void } }).stream?.destroy();
      client.end(true);
    },
  };
}
