/**
 * The fake layout's boards on MQTT: one client per node, each with that board's own
 * credentials, exactly as a real board would connect (CONTRACT.md §2): retained status with
 * a Last Will of `online:false`, a subscription to the layout's signal aspects, pulses and
 * lamp-proving reports at QoS 1.
 */
import mqtt, { type MqttClient } from "mqtt";
import { aspectPayloadSchema, topics, type AspectPayload } from "../../shared/contract/live";
import type { BoardState, OutMessage } from "./player";

const CONNECT_TIMEOUT_MS = 10_000;
const RECONNECT_PERIOD_MS = 2_000;

export interface MqttBoardsOptions {
  brokerUrl: string;
  layout: string;
  boards: BoardState[];
  /** node id → plain secret. */
  secrets: Record<string, string>;
  firmware: string;
  onAspect: (node: string, signal: string, payload: AspectPayload) => void;
  log: (line: string) => void;
}

export class MqttBoards {
  private readonly clients = new Map<string, MqttClient>();

  constructor(private readonly options: MqttBoardsOptions) {}

  /** Connects every board; resolves when all are connected (or have failed once, logged). */
  async connect(): Promise<void> {
    const { brokerUrl, layout, secrets, log } = this.options;
    await Promise.all(
      this.options.boards.map(
        (board) =>
          new Promise<void>((resolve) => {
            const statusTopic = topics.status(layout, board.node);
            const client = mqtt.connect(brokerUrl, {
              protocolVersion: 4,
              clientId: `${layout}.${board.node}`, // CONTRACT.md §2, board duty 1: the broker refuses any other
              username: board.node,
              password: secrets[board.node],
              clean: true,
              connectTimeout: CONNECT_TIMEOUT_MS,
              reconnectPeriod: RECONNECT_PERIOD_MS,
              will: { topic: statusTopic, payload: Buffer.from(JSON.stringify({ online: false, boot: board.boot })), qos: 1, retain: true },
            });
            this.clients.set(board.node, client);
            let complained = false;
            client.on("connect", () => {
              complained = false;
              log(`board ${board.node} connected (boot ${board.boot})`);
              client.publish(statusTopic, JSON.stringify({ online: true, boot: board.boot, fw: this.options.firmware }), { qos: 1, retain: true });
              client.subscribe(topics.signalFilter(layout), { qos: 1 });
              resolve();
            });
            client.on("error", (err) => {
              if (!complained) {
                const auth = /auth|password/i.test(err.message) ? " (check the board's secret: --secrets FILE)" : "";
                log(`board ${board.node}: ${err.message}${auth}; retrying`);
                complained = true;
              }
              resolve();
            });
            client.on("message", (topic, payload) => this.onMessage(board.node, topic, payload));
          }),
      ),
    );
  }

  private onMessage(node: string, topic: string, payload: Buffer): void {
    const prefix = `${topics.signalFilter(this.options.layout).slice(0, -1)}`;
    if (!topic.startsWith(prefix) || !topic.endsWith("/aspect")) return;
    const signal = topic.slice(prefix.length, -"/aspect".length);
    let json: unknown;
    try {
      json = JSON.parse(payload.toString("utf8"));
    } catch {
      return;
    }
    const parsed = aspectPayloadSchema.safeParse(json);
    if (parsed.success) this.options.onAspect(node, signal, parsed.data);
  }

  send(message: OutMessage): void {
    const client = this.clients.get(message.node);
    if (!client) return;
    const topic = message.kind === "pulse" ? topics.pulse(this.options.layout, message.node) : topics.shown(this.options.layout, message.node);
    client.publish(topic, JSON.stringify(message.payload), { qos: 1 });
  }

  /** Says goodbye properly: retained offline status, then a clean disconnect. */
  async close(): Promise<void> {
    await Promise.all(
      [...this.clients.entries()].map(async ([node, client]) => {
        const board = this.options.boards.find((b) => b.node === node);
        if (client.connected) {
          await client
            .publishAsync(topics.status(this.options.layout, node), JSON.stringify({ online: false, boot: board?.boot }), { qos: 1, retain: true })
            .catch(() => undefined);
        }
        await client.endAsync().catch(() => undefined);
      }),
    );
  }
}
