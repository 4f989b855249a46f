/**
 * A simple, faithful test board for the sustained bench, doing CONTRACT.md §2's board duties:
 * client id `{layout}.{node}`, clean session off, keepalive 10 s; subscribes to its layout's
 * signals, points, its own `applied` and `server/status`; keeps every pulse until an
 * `applied` for its boot covers its seq and publishes the uncovered ones again, in order,
 * after every reconnect (a full buffer drops the oldest); shows danger while its broker link
 * is down for over 2 s, while the server says offline, or 3 s after the last heartbeat
 * (once it has seen one), and leaves danger only on a newer `rev`.
 */
import mqtt, { type MqttClient } from "mqtt";

const KEEPALIVE_S = 10;
const CONNECT_TIMEOUT_MS = 30_000;
const BUFFER_MAX = 200_000;
const LINK_DOWN_DANGER_MS = 2_000;
const HEARTBEAT_DANGER_MS = 3_000;

export interface BenchBoardOptions {
  url: string;
  layout: string;
  node: string;
  secret: string;
  boot: string;
  /** `publishedAt`: the server's stamp (`at`, wall clock) on the command. */
  onAspect?: (signal: string, aspect: string, receivedAt: number, publishedAt: number) => void;
}

export class BenchBoard {
  readonly client: MqttClient;
  readonly boot: string;
  private seq = 0;
  /** Uncovered messages of this boot, in seq order. */
  private readonly uncovered = new Map<number, string>();
  private bootStartedAt = performance.now();
  private lastHeartbeat: number | null = null;
  private linkDownSince: number | null = null;
  private serverOffline = false;
  private faultRev = -1;
  private newestRev = -1;
  dropped = 0;
  covered = 0;

  private constructor(private readonly options: BenchBoardOptions) {
    this.boot = options.boot;
    const root = `blocklight/v1/${options.layout}`;
    this.client = mqtt.connect(options.url, {
      protocolVersion: 4,
      clientId: `${options.layout}.${options.node}`,
      username: options.node,
      password: options.secret,
      clean: false,
      keepalive: KEEPALIVE_S,
      reconnectPeriod: 500,
      will: { topic: `${root}/node/${options.node}/status`, payload: Buffer.from(JSON.stringify({ online: false, boot: this.boot })), qos: 1, retain: true },
    });
    let connectedBefore = false;
    this.client.on("connect", () => {
      (this.client.stream as { setNoDelay?: (on: boolean) => void }).setNoDelay?.(true);
      this.linkDownSince = null;
      this.client.subscribe(
        [`${root}/signal/#`, `${root}/points/#`, `${root}/node/${options.node}/applied`, `${root}/server/status`].map((topic) => topic),
        { qos: 1 },
        () => {},
      );
      this.client.publish(`${root}/node/${options.node}/status`, JSON.stringify({ online: true, boot: this.boot, fw: "bench-1" }), { qos: 1, retain: true });
      if (connectedBefore) for (const [, payload] of this.uncovered) this.client.publish(`${root}/node/${options.node}/pulse`, payload, { qos: 1 });
      connectedBefore = true;
    });
    this.client.on("close", () => (this.linkDownSince ??= performance.now()));
    this.client.on("message", (topic, payload) => {
      const now = performance.now();
      if (topic.endsWith("/applied")) {
        const applied = JSON.parse(payload.toString()) as { boot: string; seq: number };
        if (applied.boot !== this.boot) return;
        for (const seq of this.uncovered.keys()) {
          if (seq > applied.seq) break;
          this.uncovered.delete(seq);
          this.covered++;
        }
      } else if (topic.endsWith("/server/status")) {
        const status = JSON.parse(payload.toString()) as { online: boolean };
        this.lastHeartbeat = now;
        this.serverOffline = !status.online;
        if (this.serverOffline) this.faultRev = this.newestRev;
      } else if (topic.includes("/signal/")) {
        const aspect = JSON.parse(payload.toString()) as { rev: number; aspect: string; at: string };
        this.newestRev = Math.max(this.newestRev, aspect.rev);
        options.onAspect?.(topic.split("/")[4], aspect.aspect, now, Date.parse(aspect.at));
      }
    });
  }

  static async connect(options: BenchBoardOptions): Promise<BenchBoard> {
    const board = new BenchBoard(options);
    // The broker may still be starting: the client keeps retrying until it answers.
    await new Promise<void>((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error(`board ${options.node} could not connect`)), CONNECT_TIMEOUT_MS);
      board.client.once("connect", () => {
        clearTimeout(timer);
        resolve();
      });
    });
    return board;
  }

  /**
   * Publishes one pulse stamped with the board's clock at `happenedAt` (performance.now()
   * time when the axle crossed: the load's schedule, so a late publish is not a shorter gap);
   * returns its seq.
   */
  pulse(detector: string, happenedAt = performance.now()): number {
    const seq = ++this.seq;
    const t = Math.max(0, Math.round(happenedAt - this.bootStartedAt));
    const payload = `{"detector":"${detector}","seq":${seq},"boot":"${this.boot}","t":${t}}`;
    this.uncovered.set(seq, payload);
    if (this.uncovered.size > BUFFER_MAX) {
      const oldest = this.uncovered.keys().next().value as number;
      this.uncovered.delete(oldest);
      this.dropped++;
    }
    this.client.publish(`blocklight/v1/${this.options.layout}/node/${this.options.node}/pulse`, payload, { qos: 1 });
    return seq;
  }

  /** Duty 4: would this board show danger on its signals now? */
  failSafe(now = performance.now()): boolean {
    const linkDown = this.linkDownSince !== null && now - this.linkDownSince > LINK_DOWN_DANGER_MS;
    const silent = this.lastHeartbeat !== null && now - this.lastHeartbeat > HEARTBEAT_DANGER_MS;
    return linkDown || silent || this.serverOffline || this.newestRev <= this.faultRev;
  }

  uncoveredCount(): number {
    return this.uncovered.size;
  }

  end(): Promise<void> {
    return this.client.endAsync();
  }
}
