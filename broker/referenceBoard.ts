/**
 * A minimal reference board on mqtt.js that does exactly the board duties of CONTRACT.md §2
 * (docs/board-guide.md explains each). Copy it for your own board, or use it as it is: the
 * fake layout and every test board run on it.
 *
 * 1. Client id `{layout}.{node}`, username = node id, password = its secret, clean session
 *    off, keepalive ≤ 10 s; the Last Will is a retained `status` `{"online":false}`.
 * 2. Subscribes to `signal/#`, `points/#`, `node/{id}/applied` and `server/status`.
 * 3. Keeps every pulse and points report until an `applied` for its boot covers its seq;
 *    after every (re)connect publishes the uncovered ones again, in seq order, before anything
 *    new (a new mqtt.js client per connection, so nothing is sent twice by the library itself).
 *    The server's reconnect counts too: when `server/status` turns online in a live (not
 *    retained) message, the uncovered ones go again — a broker that restarted may have
 *    dropped what came before the server's subscription.
 *    A full buffer drops its oldest message and keeps counting: the server sees the gap.
 * 4. Fail-safe: every signal shows danger while the broker link has been down over 2 s, while
 *    `server/status` says offline, or 3 s after the last `server/status`; afterwards a signal
 *    leaves danger only on an aspect whose rev is newer than every rev seen before the fault.
 */
import { randomBytes } from "node:crypto";
import mqtt, { type MqttClient } from "mqtt";
import { aspectPayloadSchema, appliedPayloadSchema, pointsSetPayloadSchema, serverStatusPayloadSchema, topics, type AspectPayload, type PointsSetPayload } from "@shared/contract/live";
import type { Aspect } from "@shared/rulebook/schema";

export const LINK_DOWN_DANGER_MS = 2_000;
export const HEARTBEAT_LOST_MS = 3_000;
/** The contract allows at most 10 s; the most it allows rides out a busy machine best. */
export const BOARD_KEEPALIVE_S = 10;
/** How long a reference board's points motor takes, by default. */
export const POINTS_MOVE_MS = 600;
const RECONNECT_MS = 500;
const CHECK_MS = 100;
const DEFAULT_OUTBOX_LIMIT = 50_000;

export interface ReferenceBoardOptions {
  url: string;
  layout: string;
  node: string;
  secret: string;
  /** A fresh random id at each power-up unless given. */
  boot?: string;
  fw?: string;
  /** The signals this board drives; when absent, every signal it hears a command for. */
  signals?: string[];
  /** Publish a retained `status` `{"online":true,…}` on every connect. */
  announce?: boolean;
  /** Most messages kept waiting for `applied`. */
  outboxLimit?: number;
  /**
   * Power-worked points this board drives: on a `…/points/{id}/set` newer than any before, for a
   * position the points do not lie in, the board reports `moving`, then after `pointsMoveMs` the
   * new position (points reports, numbered with the pulses). Lying `normal` at power-up.
   */
  drives?: string[];
  /** How long the motor takes to move points (default POINTS_MOVE_MS). */
  pointsMoveMs?: number;
  /** Set, for a board whose points motor is broken: commands are heard but the points never move. */
  pointsStuck?: boolean;
  /** Every points command heard, newest rev per points. */
  onPointsSet?: (points: string, payload: PointsSetPayload) => void;
  /** A signal's shown aspect changed (lamps), with the rev of the command it follows (0 for none). */
  onShown?: (signal: string, aspect: Aspect, rev: number) => void;
  /** Every aspect command heard, newest rev per signal. */
  onAspect?: (signal: string, payload: AspectPayload) => void;
  /** An `applied` for this boot arrived (benches time pulse → applied with it). */
  onApplied?: (seq: number) => void;
  now?: () => number;
}

interface Outgoing {
  seq: number;
  topic: string;
  payload: string;
  /** Resolves when the broker acknowledged it once, or an `applied` covered it. */
  done: () => void;
}

export class ReferenceBoard {
  boot: string;
  /** The last seq used for this boot (pulses and points reports count together). */
  seq = 0;
  /** Newest aspect command per signal. */
  readonly aspects = new Map<string, AspectPayload>();
  /** What each driven signal shows now. */
  readonly shown = new Map<string, Aspect>();
  /** Newest points command per points. */
  readonly pointsSet = new Map<string, PointsSetPayload>();
  /** Where each driven points lie now. */
  readonly lies = new Map<string, "normal" | "reverse" | "moving">();
  private readonly motors = new Map<string, NodeJS.Timeout>();
  private readonly outbox = new Map<number, Outgoing>();
  private current: MqttClient | null = null;
  private connectedNow = false;
  private stopped = false;
  private downSince: number;
  private lastHeartbeat: number;
  private serverOnline = false;
  private faulted = true;
  /** Signals leave danger only on a rev above this (the highest rev seen when the last fault began). */
  private faultRev = 0;
  private maxRev = 0;
  private coveredSeq = 0;
  private checker: NodeJS.Timeout | null = null;
  private readonly now: () => number;
  private readonly coverWaiters: (() => void)[] = [];

  constructor(private readonly options: ReferenceBoardOptions) {
    this.boot = options.boot ?? randomBytes(4).toString("hex");
    this.now = options.now ?? Date.now;
    this.downSince = this.now();
    this.lastHeartbeat = this.now();
    for (const signal of options.signals ?? []) this.shown.set(signal, "danger");
    for (const points of options.drives ?? []) this.lies.set(points, "normal");
  }

  get clientId(): string {
    return `${this.options.layout}.${this.options.node}`;
  }

  /** The mqtt.js client of the current connection (tests publish odd things through it). */
  get client(): MqttClient {
    return this.current!;
  }

  get connected(): boolean {
    return this.connectedNow;
  }

  /** Messages not yet covered by an `applied`. */
  get uncovered(): number {
    return this.outbox.size;
  }

  /** Connects; rejects if the very first attempt is refused (bad secret), retries for ever after. */
  start(): Promise<void> {
    this.checker = setInterval(() => this.check(), CHECK_MS);
    this.checker.unref?.();
    return new Promise((resolve, reject) => this.open(resolve, reject));
  }

  private open(onFirst?: () => void, onFirstError?: (err: Error) => void): void {
    if (this.stopped) return;
    const { layout, node } = this.options;
    const client = mqtt.connect(this.options.url, {
      protocolVersion: 4,
      clientId: this.clientId,
      username: node,
      password: this.options.secret,
      clean: false,
      keepalive: BOARD_KEEPALIVE_S,
      reconnectPeriod: 0, // our own loop: a new client per connection
      connectTimeout: 5_000,
      will: { topic: topics.status(layout, node), payload: Buffer.from(JSON.stringify({ online: false, boot: this.boot })), qos: 1, retain: true },
    });
    this.current = client;
    let settled = false;
    client.on("connect", () => {
      settled = true;
      this.connectedNow = true;
      this.downSince = Number.POSITIVE_INFINITY;
      (client.stream as { setNoDelay?: (on: boolean) => void }).setNoDelay?.(true);
      client.subscribe(
        [topics.signalFilter(layout), topics.pointsFilter(layout), topics.applied(layout, node), topics.serverStatus(layout)],
        { qos: 1 },
      );
      if (this.options.announce) {
        client.publish(topics.status(layout, node), JSON.stringify({ online: true, boot: this.boot, ...(this.options.fw ? { fw: this.options.fw } : {}) }), {
          qos: 1,
          retain: true,
        });
      }
      this.serverOnline = false; // until this connection hears it
      this.resendUncovered();
      onFirst?.();
    });
    client.on("message", (topic, payload, packet) => this.onMessage(topic, payload, packet.retain));
    client.on("error", (err) => {
      if (!settled && onFirstError) {
        settled = true;
        this.stopped = true;
        if (this.checker) clearInterval(this.checker);
        client.end(true);
        onFirstError(err);
      }
    });
    client.on("close", () => {
      if (this.current !== client) return;
      if (this.connectedNow) this.downSince = this.now();
      this.connectedNow = false;
      client.removeAllListeners("close");
      client.end(true);
      if (!this.stopped && (settled || !onFirstError)) setTimeout(() => this.open(), RECONNECT_MS).unref?.();
      else if (!settled && onFirstError) {
        settled = true;
        onFirstError(new Error("connection closed before CONNACK"));
      }
    });
  }

  /** Duty 3: everything uncovered again, in seq order, before anything new. */
  private resendUncovered(): void {
    for (const out of [...this.outbox.values()].sort((a, b) => a.seq - b.seq)) this.transmit(out);
  }

  private transmit(out: Outgoing): void {
    const client = this.current;
    if (!client || !this.connectedNow) return;
    client.publish(out.topic, out.payload, { qos: 1 }, (err) => {
      if (!err) out.done();
    });
  }

  /** Numbers a message with the next seq of this boot, keeps it, sends it when connected. */
  private send(kind: "pulse" | "points", body: Record<string, unknown>): Promise<void> {
    const seq = ++this.seq;
    return this.keep(kind, { ...body, seq, boot: this.boot });
  }

  /** Keeps an already numbered message (a player that counts seqs itself must count them in order). */
  keep(kind: "pulse" | "points", payload: Record<string, unknown> & { seq: number; boot: string }): Promise<void> {
    if (payload.boot !== this.boot) this.reboot(payload.boot); // the player powered up anew
    this.seq = Math.max(this.seq, payload.seq);
    const topic = kind === "pulse" ? topics.pulse(this.options.layout, this.options.node) : topics.points(this.options.layout, this.options.node);
    return new Promise((resolve) => {
      const out: Outgoing = { seq: payload.seq, topic, payload: JSON.stringify(payload), done: resolve };
      this.outbox.set(payload.seq, out);
      const limit = this.options.outboxLimit ?? DEFAULT_OUTBOX_LIMIT;
      if (this.outbox.size > limit) {
        const oldest = this.outbox.keys().next().value!;
        this.outbox.get(oldest)!.done();
        this.outbox.delete(oldest);
      }
      this.transmit(out);
    });
  }

  pulse(detector: string, t?: number): Promise<void> {
    return this.send("pulse", { detector, ...(t !== undefined ? { t } : {}) });
  }

  pointsReport(points: string, lies: "normal" | "reverse" | "moving"): Promise<void> {
    return this.send("points", { points, lies });
  }

  /** Anything else, once, as it is (lamp-proving reports; tests' odd payloads). */
  publishRaw(topic: string, payload: string | Buffer, retain = false): Promise<void> {
    if (!this.current || !this.connectedNow) return Promise.resolve();
    return this.current.publishAsync(topic, payload, { qos: 1, retain }).then(() => undefined);
  }

  /** Resolves once every message sent so far is covered by an `applied`. */
  whenCovered(): Promise<void> {
    if (this.outbox.size === 0) return Promise.resolve();
    return new Promise((resolve) => this.coverWaiters.push(resolve));
  }

  /** Power cycle: a new boot, seq from 1; whatever was uncovered is lost with the old boot. */
  reboot(boot = randomBytes(4).toString("hex")): void {
    for (const out of this.outbox.values()) out.done();
    this.outbox.clear();
    this.boot = boot;
    this.seq = 0;
    this.coveredSeq = 0;
    this.current?.stream?.destroy();
  }

  private onMessage(topic: string, raw: Buffer, retained: boolean): void {
    const { layout, node } = this.options;
    let json: unknown;
    try {
      json = JSON.parse(raw.toString("utf8"));
    } catch {
      return;
    }
    if (topic === topics.applied(layout, node)) {
      const p = appliedPayloadSchema.safeParse(json);
      if (!p.success || p.data.boot !== this.boot) return;
      this.coveredSeq = Math.max(this.coveredSeq, p.data.seq);
      this.options.onApplied?.(p.data.seq);
      for (const [seq, out] of this.outbox) {
        if (seq > this.coveredSeq) break; // kept in seq order
        out.done();
        this.outbox.delete(seq);
      }
      if (this.outbox.size === 0) for (const waiter of this.coverWaiters.splice(0)) waiter();
      return;
    }
    if (topic === topics.serverStatus(layout)) {
      const p = serverStatusPayloadSchema.safeParse(json);
      if (!p.success) return;
      const cameBack = p.data.online && !this.serverOnline && !retained;
      this.serverOnline = p.data.online;
      if (cameBack) this.resendUncovered();
      if (p.data.online) this.lastHeartbeat = this.now();
      this.check();
      return;
    }
    const pointsPrefix = topics.pointsFilter(layout).slice(0, -1);
    if (topic.startsWith(pointsPrefix) && topic.endsWith("/set")) {
      const p = pointsSetPayloadSchema.safeParse(json);
      if (!p.success) return;
      const points = topic.slice(pointsPrefix.length, -"/set".length);
      const known = this.pointsSet.get(points);
      if (known && known.rev >= p.data.rev) return; // a redelivered or older command
      this.pointsSet.set(points, p.data);
      this.options.onPointsSet?.(points, p.data);
      this.drive(points, p.data.to);
      return;
    }
    const prefix = topics.signalFilter(layout).slice(0, -1);
    if (topic.startsWith(prefix) && topic.endsWith("/aspect")) {
      const p = aspectPayloadSchema.safeParse(json);
      if (!p.success) return;
      const signal = topic.slice(prefix.length, -"/aspect".length);
      const known = this.aspects.get(signal);
      if (known && known.rev > p.data.rev) return; // a board shows the newest
      this.aspects.set(signal, p.data);
      this.maxRev = Math.max(this.maxRev, p.data.rev);
      if (!this.options.signals && !this.shown.has(signal)) this.shown.set(signal, "danger");
      this.options.onAspect?.(signal, p.data);
      this.refresh();
    }
  }

  /** Moves driven points to `to`: `moving` now, `to` once the motor has run (a newer command restarts it). */
  private drive(points: string, to: "normal" | "reverse"): void {
    if (!this.lies.has(points) || this.options.pointsStuck) return;
    const running = this.motors.get(points);
    if (running) clearTimeout(running);
    this.motors.delete(points);
    if (this.lies.get(points) === to) return;
    if (this.lies.get(points) !== "moving") {
      this.lies.set(points, "moving");
      void this.pointsReport(points, "moving");
    }
    const timer = setTimeout(() => {
      this.motors.delete(points);
      if (this.stopped) return;
      this.lies.set(points, to);
      void this.pointsReport(points, to);
    }, this.options.pointsMoveMs ?? POINTS_MOVE_MS);
    timer.unref?.();
    this.motors.set(points, timer);
  }

  /** Duty 4, looked at every CHECK_MS and on every server status. */
  private check(): void {
    const now = this.now();
    const fault = now - this.downSince > LINK_DOWN_DANGER_MS || !this.serverOnline || now - this.lastHeartbeat > HEARTBEAT_LOST_MS;
    if (fault && !this.faulted) this.faultRev = this.maxRev;
    if (fault !== this.faulted) {
      this.faulted = fault;
      this.refresh();
    }
  }

  private refresh(): void {
    for (const signal of this.shown.keys()) {
      const command = this.aspects.get(signal);
      const aspect: Aspect = !this.faulted && command && command.rev > this.faultRev ? command.aspect : "danger";
      if (this.shown.get(signal) === aspect) continue;
      this.shown.set(signal, aspect);
      this.options.onShown?.(signal, aspect, command?.rev ?? 0);
    }
  }

  /** Is the board in fail-safe now (every signal at danger)? */
  get failSafe(): boolean {
    return this.faulted;
  }

  /** Clean power-down: offline status, then DISCONNECT. */
  async end(): Promise<void> {
    this.stopped = true;
    if (this.checker) clearInterval(this.checker);
    for (const timer of this.motors.values()) clearTimeout(timer);
    this.motors.clear();
    const client = this.current;
    if (!client) return;
    if (!this.connectedNow) {
      // Between connections: a dropped client (mqtt.js never calls back an end on it) or one
      // still connecting. Ended at once either way; stopped, the board opens no other.
      client.end(true);
      return;
    }
    if (this.options.announce) {
      await client.publishAsync(topics.status(this.options.layout, this.options.node), JSON.stringify({ online: false, boot: this.boot }), { qos: 1, retain: true }).catch(() => undefined);
    }
    await client.endAsync().catch(() => undefined);
  }

  /** Power lost: the connection just drops (the broker publishes the will). */
  kill(): void {
    this.stopped = true;
    if (this.checker) clearInterval(this.checker);
    this.current?.stream?.destroy();
    this.current?.end(true);
  }
}
