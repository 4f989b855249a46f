/**
 * One runner per live layout: the host of the rulebook engine.
 *
 * Inputs (board messages, clock ticks for quiet triggers, signaller commands, rulebook
 * switches) join one queue and are applied strictly in order. The queue is taken in batches:
 * every input of a batch is applied in memory, then the batch's events, changes, session
 * opens/closes, audit entries and (every `snapshotEvery` engine inputs) a state snapshot are
 * written in ONE transaction. Only after COMMIT are the boards' QoS 1 pulses acknowledged,
 * the changed aspects published and the updates pushed to browsers. A batch that cannot be
 * committed is retried, unchanged, until it can; its pulses stay unacknowledged meanwhile.
 *
 * Fail-safe: if the engine throws, or the database stays unreachable for `dbOutageDangerMs`,
 * every signal is commanded to danger at once (danger needs no commit: it is the safe side).
 */
import type pg from "pg";
import type { AlarmKind, ChangeDto, CommandBody, LiveEventDto, LiveState, LiveUpdate, NodeLiveDto, SessionDto } from "../../shared/contract/live";
import { initialState, shownAspects, signalIds, step, type Change, type EngineInput, type EngineState } from "../../shared/rulebook/engine";
import type { Aspect, Rulebook } from "../../shared/rulebook/schema";
import type { AppDeps } from "../deps";
import { clearAlarms, listAlarms, raiseAlarm } from "../features/alarms/service";
import type { IngestResult, NodeEntry } from "./ingest";
import type { AspectPublisher } from "./publisher";
import { batchIsEmpty, commitBatch, emptyBatch, type Batch, type CommitResult, type PendingEvent, type SessionRef } from "./store";

export interface RunnerOptions {
  /** A session closes after this long with no pulse or command. */
  sessionIdleMs: number;
  /** A snapshot of the engine state every this many engine inputs. */
  snapshotEvery: number;
  /** Signals go to danger when commits have failed for this long. */
  dbOutageDangerMs: number;
  /** Most inputs in one group commit. */
  maxBatch: number;
  now: () => number;
}

export const DEFAULT_RUNNER_OPTIONS: RunnerOptions = {
  sessionIdleMs: 30 * 60_000,
  snapshotEvery: 1000,
  dbOutageDangerMs: 3_000,
  maxBatch: 5_000,
  now: Date.now,
};

const RETRY_FIRST_MS = 50;
const RETRY_MAX_MS = 1_000;
/** Recent seqs remembered per (node, boot) to tell a redelivery from a late pulse. */
const RECENT_SEQS = 4096;
/** Raw payloads of refused messages are kept up to this many characters. */
const RAW_KEEP_CHARS = 2048;
/** Replay reads accepted events in pages of this many. */
const REPLAY_PAGE = 5_000;

export interface CommandUser {
  id: number;
  name: string;
}

type Item =
  | { type: "message"; topic: string; payload: Buffer; retain: boolean; receivedAt: number; result: IngestResult; ack: () => void }
  | { type: "tick"; at: number }
  | { type: "command"; body: CommandBody; user: CommandUser; done: (err: Error | null) => void }
  | { type: "switch"; version: number; rulebook: Rulebook; userId: number | null; done: () => void }
  | { type: "session"; action: "open" | "close"; user: CommandUser; done: (err: Error | null) => void }
  | { type: "idle" };

interface SeqTrack {
  max: number;
  recent: Set<number>;
}

interface OpenSession {
  ref: SessionRef;
  openedAt: number;
  rulebookVersion: number;
  lastActivity: number;
}

interface Effects {
  acks: (() => void)[];
  updates: { event: PendingEvent | null; patch: LiveUpdate["patch"] }[];
  alarms: { kind: AlarmKind; subject: string | null; message: string; eventIndex: number | null }[];
  clears: { kind: AlarmKind; subject: string | null }[];
  done: (() => void)[];
}

interface SnapshotState {
  engine: EngineState;
  since: Record<string, string>;
}

const seqKey = (node: string, boot: string) => `${node}\u0000${boot}`;
const iso = (ms: number) => new Date(ms).toISOString();
const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

function alarmOfChange(change: Change): { kind: AlarmKind; subject: string; message: string } | null {
  if (change.kind !== "alarm") return null;
  const message = change.detail ?? String(change.to);
  switch (change.to) {
    case "count-underflow":
      return { kind: "count-underflow", subject: change.name, message };
    case "rule-loop":
      return { kind: "rule-loop", subject: change.name, message };
    default:
      return { kind: "rulebook", subject: change.name, message };
  }
}

export class LayoutRunner {
  readonly layoutId: number;
  readonly slug: string;
  rulebook!: Rulebook;
  rulebookVersion!: number;
  private state!: EngineState;
  /** Socket version: +1 per pushed update. */
  private version = 0;
  private nodes = new Map<string, NodeEntry>();
  private nodeLive = new Map<string, NodeLiveDto>();
  private seqs = new Map<string, SeqTrack>();
  private session: OpenSession | null = null;
  private since: Record<string, string> = {};
  private inputsSinceSnapshot = 0;
  /** What the boards were last told, per signal. */
  private published = new Map<string, { aspect: Aspect; rev: number }>();
  private aspectRev = 0;
  /** The engine threw: everything at danger until a restart command or a new rulebook. */
  private pipelineFault: { reason: string; at: number } | null = null;
  /** Commits failing for too long: everything at danger until one succeeds. */
  private outage: { reason: string; at: number } | null = null;
  private queue: Item[] = [];
  private busy = false;
  private stopped = false;
  private tempKeys = 0;
  private quietTimer: NodeJS.Timeout | null = null;
  private idleTimer: NodeJS.Timeout | null = null;
  private alarmChain: Promise<void> = Promise.resolve();
  private idleWaiters: (() => void)[] = [];
  private committed: Omit<LiveState, "alarms"> | null = null;

  constructor(
    private readonly deps: AppDeps,
    private readonly pool: pg.Pool,
    private readonly publisher: AspectPublisher,
    layout: { id: number; slug: string },
    private readonly options: RunnerOptions,
  ) {
    this.layoutId = layout.id;
    this.slug = layout.slug;
  }

  // ───────────────────────────── start-up and recovery ─────────────────────────────

  /**
   * Recovery: the latest snapshot of the live rulebook version, then every later accepted
   * engine input replayed through `step`, so the state equals the one before a crash.
   */
  async start(): Promise<void> {
    const now = this.options.now();
    const { rows: layoutRows } = await this.pool.query<{ live_version: number; aspect_rev: string }>(
      `SELECT live_version, aspect_rev FROM layouts WHERE id = $1`,
      [this.layoutId],
    );
    const version = layoutRows[0].live_version;
    this.aspectRev = Number(layoutRows[0].aspect_rev);
    const { rows: rbRows } = await this.pool.query<{ rulebook: Rulebook }>(
      `SELECT rulebook FROM rulebook_versions WHERE layout_id = $1 AND version = $2`,
      [this.layoutId, version],
    );
    this.rulebook = rbRows[0].rulebook;
    this.rulebookVersion = version;
    await this.loadNodes();

    const { rows: snaps } = await this.pool.query<{ rulebook_version: number; last_event_id: string; state: SnapshotState }>(
      `SELECT rulebook_version, last_event_id, state FROM snapshots WHERE layout_id = $1 ORDER BY id DESC LIMIT 1`,
      [this.layoutId],
    );
    const snap = snaps[0];
    let fromEventId = "0";
    if (snap && snap.rulebook_version === version) {
      this.state = snap.state.engine;
      this.since = snap.state.since ?? {};
      fromEventId = snap.last_event_id;
      await this.replayFrom(fromEventId);
    } else {
      // First start of this layout, or a rulebook published while no runtime ran.
      this.state = initialState(this.rulebook, now);
      const batch = emptyBatch(this.layoutId);
      batch.snapshot = { rulebookVersion: version, session: null, state: this.snapshotState() };
      if (snap) {
        batch.audits.push({
          userId: null,
          action: "live-rulebook-switched",
          target: `version ${version}`,
          reason: "the live runtime started on a newly published rulebook: initial state",
          before: { rulebookVersion: snap.rulebook_version },
          after: { rulebookVersion: version },
        });
      }
      await commitBatch(this.pool, batch);
    }

    const { rows: sessions } = await this.pool.query<{ id: number; opened_at: Date; rulebook_version: number | null; last: Date | null }>(
      `SELECT s.id, s.opened_at, s.rulebook_version,
              (SELECT max(received_at) FROM events e WHERE e.session_id = s.id AND e.status = 'accepted' AND e.kind IN ('pulse','command')) AS last
         FROM sessions s WHERE s.layout_id = $1 AND s.closed_at IS NULL ORDER BY s.id DESC LIMIT 1`,
      [this.layoutId],
    );
    if (sessions[0]) {
      const s = sessions[0];
      this.session = {
        ref: { id: s.id },
        openedAt: s.opened_at.getTime(),
        rulebookVersion: s.rulebook_version ?? version,
        lastActivity: (s.last ?? s.opened_at).getTime(),
      };
    }
    await this.loadSeqs();
    await this.loadNodeLive();
    // Tell every board the truth at once: the retained commands may be older than the state.
    this.publishDiff(this.options.now());
    await this.pool.query(`UPDATE layouts SET aspect_rev = GREATEST(aspect_rev, $2) WHERE id = $1`, [this.layoutId, this.revReservation()]);
    this.captureCommitted();
    this.armTimers();
  }

  private snapshotState(): SnapshotState {
    return { engine: this.state, since: this.since };
  }

  private async replayFrom(afterId: string): Promise<void> {
    let last = afterId;
    for (;;) {
      const { rows } = await this.pool.query<{ id: string; kind: string; detector: string | null; received_at: Date; input: EngineInput | null }>(
        // Sort by the bigint column itself: the output column `id` is text, and ORDER BY a bare
        // name would sort by that (event "10" before "9").
        `SELECT e.id::text AS id, e.kind, e.detector, e.received_at, e.input FROM events e
          WHERE e.layout_id = $1 AND e.id > $2 AND e.status = 'accepted' AND e.kind IN ('pulse','tick','command') AND NOT e.imported
          ORDER BY e.id LIMIT ${REPLAY_PAGE}`,
        [this.layoutId, last],
      );
      for (const row of rows) {
        const input: EngineInput | null =
          row.kind === "pulse" ? { type: "pulse", detector: row.detector!, at: row.received_at.getTime() } : row.input;
        if (!input) continue;
        const result = step(this.rulebook, this.state, input);
        this.state = result.state;
        this.noteSince(result.changes, iso(input.at));
        this.inputsSinceSnapshot++;
      }
      if (rows.length < REPLAY_PAGE) return;
      last = rows[rows.length - 1].id;
    }
  }

  async loadNodes(): Promise<void> {
    const { rows } = await this.pool.query<{ node_id: string; detectors: string[]; signals: string[] }>(
      `SELECT node_id, detectors, signals FROM nodes WHERE layout_id = $1`,
      [this.layoutId],
    );
    this.nodes = new Map(rows.map((r) => [r.node_id, { detectors: new Set(r.detectors), signals: new Set(r.signals) }]));
  }

  private async loadSeqs(): Promise<void> {
    const { rows: maxRows } = await this.pool.query<{ node_id: string; boot: string; max: string }>(
      `SELECT node_id, boot, max(seq)::text AS max FROM events
        WHERE layout_id = $1 AND kind = 'pulse' AND status = 'accepted' AND NOT imported GROUP BY node_id, boot`,
      [this.layoutId],
    );
    for (const r of maxRows) this.seqs.set(seqKey(r.node_id, r.boot), { max: Number(r.max), recent: new Set() });
    const { rows: recent } = await this.pool.query<{ node_id: string; boot: string; seq: string }>(
      `SELECT node_id, boot, seq::text FROM events
        WHERE layout_id = $1 AND kind = 'pulse' AND status = 'accepted' AND NOT imported ORDER BY id DESC LIMIT ${RECENT_SEQS * 4}`,
      [this.layoutId],
    );
    for (const r of recent.reverse()) this.seqs.get(seqKey(r.node_id, r.boot))?.recent.add(Number(r.seq));
  }

  private async loadNodeLive(): Promise<void> {
    const { rows } = await this.pool.query<{ node_id: string; received_at: Date; raw_payload: string | null; input: { online: boolean; boot?: string; fw?: string } | null }>(
      `SELECT DISTINCT ON (node_id) node_id, received_at, raw_payload, input FROM events
        WHERE layout_id = $1 AND kind = 'status' AND status = 'accepted' AND NOT imported ORDER BY node_id, id DESC`,
      [this.layoutId],
    );
    for (const r of rows) {
      if (!r.input) continue;
      this.nodeLive.set(r.node_id, { online: r.input.online, since: r.received_at.toISOString(), boot: r.input.boot ?? null, fw: r.input.fw ?? null });
    }
  }

  /** The boards of this layout, for ingest. */
  nodeDirectory(): ReadonlyMap<string, NodeEntry> {
    return this.nodes;
  }

  // ───────────────────────────── inputs ─────────────────────────────

  push(item: Item): void {
    if (this.stopped) return;
    this.queue.push(item);
    this.kick();
  }

  message(item: Omit<Extract<Item, { type: "message" }>, "type">): void {
    this.push({ type: "message", ...item });
  }

  command(body: CommandBody, user: CommandUser): Promise<void> {
    return new Promise((resolve, reject) => this.push({ type: "command", body, user, done: (err) => (err ? reject(err) : resolve()) }));
  }

  switchRulebook(version: number, rulebook: Rulebook, userId: number | null): Promise<void> {
    return new Promise((resolve) => this.push({ type: "switch", version, rulebook, userId, done: resolve }));
  }

  sessionControl(action: "open" | "close", user: CommandUser): Promise<void> {
    return new Promise((resolve, reject) => this.push({ type: "session", action, user, done: (err) => (err ? reject(err) : resolve()) }));
  }

  /** Resolves when the queue is empty and nothing is being committed (tests, clean stop). */
  idle(): Promise<void> {
    if (!this.busy && this.queue.length === 0) return Promise.resolve();
    return new Promise((resolve) => this.idleWaiters.push(resolve));
  }

  /** Clean stop: finish what is queued, then stop the timers. */
  async stop(): Promise<void> {
    await this.idle();
    await this.alarmChain;
    this.abandon();
  }

  /** Taken out of service (the layout was archived): every signal to danger, then a clean stop. */
  async retire(reason: string): Promise<void> {
    await this.idle();
    this.failSafe(reason);
    await this.stop();
  }

  /** Crash: drop the queue and timers at once, acknowledging nothing more. */
  abandon(): void {
    this.stopped = true;
    this.queue = [];
    if (this.quietTimer) clearTimeout(this.quietTimer);
    if (this.idleTimer) clearTimeout(this.idleTimer);
    for (const waiter of this.idleWaiters.splice(0)) waiter();
  }

  private kick(): void {
    if (!this.busy && !this.stopped && this.queue.length > 0) void this.drain();
  }

  private async drain(): Promise<void> {
    this.busy = true;
    try {
      while (this.queue.length > 0 && !this.stopped) {
        const { batch, effects } = this.build();
        let result: CommitResult = { eventIds: [], sessionIds: new Map() };
        if (!batchIsEmpty(batch)) result = await this.commitWithRetry(batch);
        if (this.stopped) return;
        this.afterCommit(batch, result, effects);
      }
    } catch (err) {
      this.deps.logger.error({ err, layout: this.slug }, "live runner stopped on an error");
      this.failSafe(`live runner error: ${(err as Error).message}`);
    } finally {
      this.busy = false;
      if (this.queue.length === 0 || this.stopped) for (const waiter of this.idleWaiters.splice(0)) waiter();
      else this.kick();
    }
  }

  private async commitWithRetry(batch: Batch): Promise<CommitResult> {
    const started = this.options.now();
    let delay = RETRY_FIRST_MS;
    for (let attempt = 1; ; attempt++) {
      try {
        const result = await commitBatch(this.pool, batch);
        if (this.outage) {
          this.deps.logger.warn({ layout: this.slug, attempts: attempt }, "database back: committing again");
          this.outage = null;
        }
        return result;
      } catch (err) {
        if (this.stopped) throw err;
        if (attempt === 1) this.deps.logger.warn({ err, layout: this.slug }, "group commit failed; retrying, pulses stay unacknowledged");
        if (!this.outage && this.options.now() - started >= this.options.dbOutageDangerMs) {
          this.outage = { reason: `database unavailable: ${(err as Error).message}`, at: this.options.now() };
          this.deps.logger.error({ layout: this.slug }, "database unavailable too long: every signal to danger");
          this.publishDiff(this.options.now());
          this.pushUpdate(null, { shown: this.shownNow(), faulted: this.faultedDto() });
        }
        await sleep(delay);
        delay = Math.min(delay * 2, RETRY_MAX_MS);
      }
    }
  }

  // ───────────────────────────── building a batch ─────────────────────────────

  private build(): { batch: Batch; effects: Effects } {
    const batch = emptyBatch(this.layoutId);
    const effects: Effects = { acks: [], updates: [], alarms: [], clears: [], done: [] };
    let taken = 0;
    while (this.queue.length > 0 && taken < this.options.maxBatch) {
      const item = this.queue[0];
      // A rulebook switch writes its own snapshot, so it is a batch of its own.
      if (item.type === "switch" && taken > 0) break;
      this.queue.shift();
      taken++;
      this.apply(item, batch, effects);
      if (item.type === "switch") break;
    }
    if (this.inputsSinceSnapshot >= this.options.snapshotEvery && !batch.snapshot) {
      batch.snapshot = { rulebookVersion: this.rulebookVersion, session: this.session?.ref ?? null, state: this.snapshotState() };
      this.inputsSinceSnapshot = 0;
    }
    if (!batchIsEmpty(batch)) batch.aspectRev = this.revReservation();
    return { batch, effects };
  }

  /**
   * The rev stored with each commit is ahead of what will be published before the next one
   * (at most one command per signal per batch, plus a fail-safe round), so a restart never
   * reuses a rev a board has already seen.
   */
  private revReservation(): number {
    return this.aspectRev + 2 * (Object.keys(this.shownNow()).length + this.published.size) + 2;
  }

  private apply(item: Item, batch: Batch, effects: Effects): void {
    switch (item.type) {
      case "message":
        return this.applyMessage(item, batch, effects);
      case "tick":
        return this.applyTick(item.at, batch, effects);
      case "command":
        return this.applyCommand(item, batch, effects);
      case "switch":
        return this.applySwitch(item, batch, effects);
      case "session":
        return this.applySession(item, batch, effects);
      case "idle":
        return this.closeIfIdle(this.options.now(), batch, effects);
    }
  }

  private newEvent(partial: Partial<PendingEvent> & Pick<PendingEvent, "kind" | "status" | "receivedAt">): PendingEvent {
    return {
      reason: null,
      node: null,
      boot: null,
      seq: null,
      detector: null,
      boardT: null,
      topic: null,
      rawPayload: null,
      userId: null,
      input: null,
      session: this.session?.ref ?? null,
      changes: [],
      ...partial,
    };
  }

  private record(batch: Batch, effects: Effects, event: PendingEvent, patch: LiveUpdate["patch"] = {}): number {
    batch.events.push(event);
    effects.updates.push({ event, patch });
    return batch.events.length - 1;
  }

  private closeIfIdle(at: number, batch: Batch, effects: Effects): void {
    if (!this.session || at - this.session.lastActivity < this.options.sessionIdleMs) return;
    batch.sessionCloses.push({ session: this.session.ref, closedAt: this.session.lastActivity + this.options.sessionIdleMs, reason: "idle" });
    this.session = null;
    effects.updates.push({ event: null, patch: { session: null } });
  }

  private ensureSession(at: number, openedBy: number | null, batch: Batch, effects: Effects): void {
    this.closeIfIdle(at, batch, effects);
    if (this.session) {
      this.session.lastActivity = Math.max(this.session.lastActivity, at);
      return;
    }
    const temp = ++this.tempKeys;
    batch.sessionOpens.push({ temp, openedAt: at, rulebookVersion: this.rulebookVersion, openedBy });
    this.session = { ref: { temp }, openedAt: at, rulebookVersion: this.rulebookVersion, lastActivity: at };
    effects.updates.push({ event: null, patch: { session: this.sessionDto() } });
  }

  private applyMessage(item: Extract<Item, { type: "message" }>, batch: Batch, effects: Effects): void {
    effects.acks.push(item.ack);
    const result = item.result;
    const at = item.receivedAt;
    const raw = () => {
      const text = item.payload.toString("utf8");
      return text.length > RAW_KEEP_CHARS ? text.slice(0, RAW_KEEP_CHARS) + "…" : text;
    };
    if (!result.ok) {
      this.deps.logger.warn({ layout: this.slug, topic: item.topic, reason: result.reason }, "MQTT message rejected");
      this.record(
        batch,
        effects,
        this.newEvent({
          kind: result.kind,
          status: "rejected",
          reason: result.reason,
          node: result.node,
          boot: result.boot ?? null,
          seq: result.seq ?? null,
          detector: result.detector ?? null,
          receivedAt: at,
          topic: item.topic,
          rawPayload: raw(),
        }),
      );
      return;
    }
    if (result.kind === "pulse") return this.applyPulse(item, result.node, result.payload, batch, effects);
    if (result.kind === "status") {
      const p = result.payload;
      const before = this.nodeLive.get(result.node);
      // A retained status we already know (seen again on resubscribe) is not news.
      if (item.retain && before && before.online === p.online && before.boot === (p.boot ?? null)) return;
      const live: NodeLiveDto = { online: p.online, since: iso(at), boot: p.boot ?? null, fw: p.fw ?? null };
      this.nodeLive.set(result.node, live);
      // node-offline alarms are the watchers' (features/alarms/watchers.ts), after their delay.
      this.record(
        batch,
        effects,
        this.newEvent({ kind: "status", status: "accepted", node: result.node, boot: p.boot ?? null, receivedAt: at, topic: item.topic, input: p }),
        { nodes: Object.fromEntries(this.nodeLive) },
      );
      return;
    }
    // Lamp proving: the board reports what it shows; it must be what we last commanded.
    const p = result.payload;
    const commanded = this.published.get(p.signal);
    const event = this.newEvent({ kind: "shown", status: "accepted", node: result.node, receivedAt: at, topic: item.topic, input: p });
    if (commanded && p.rev >= commanded.rev) {
      if (p.aspect !== commanded.aspect) {
        event.reason = `lamp proving: shows ${p.aspect}, commanded ${commanded.aspect} (rev ${commanded.rev})`;
        const index = this.record(batch, effects, event);
        effects.alarms.push({
          kind: "lamp-proving",
          subject: p.signal,
          message: `signal ${p.signal} shows ${p.aspect} but was commanded ${commanded.aspect}`,
          eventIndex: index,
        });
        return;
      }
      effects.clears.push({ kind: "lamp-proving", subject: p.signal });
    } else if (commanded) {
      event.reason = `report for rev ${p.rev}, older than the latest command (rev ${commanded.rev}): not compared`;
    }
    this.record(batch, effects, event);
  }

  private applyPulse(
    item: Extract<Item, { type: "message" }>,
    node: string,
    p: { detector: string; seq: number; boot: string; t?: number },
    batch: Batch,
    effects: Effects,
  ): void {
    const at = item.receivedAt;
    const base = { kind: "pulse" as const, node, boot: p.boot, seq: p.seq, detector: p.detector, receivedAt: at, boardT: p.t ?? null, topic: item.topic };
    const key = seqKey(node, p.boot);
    const track = this.seqs.get(key);
    if (track && p.seq <= track.max) {
      const redelivered = track.recent.has(p.seq);
      this.record(
        batch,
        effects,
        this.newEvent({
          ...base,
          status: redelivered ? "duplicate" : "rejected",
          reason: redelivered
            ? `seq ${p.seq} of boot ${p.boot} was applied already`
            : `late: seq ${p.seq} arrived after seq ${track.max}; counted as missed, not applied`,
        }),
      );
      return;
    }
    this.ensureSession(at, null, batch, effects);
    if (this.pipelineFault) {
      this.record(batch, effects, this.newEvent({ ...base, status: "rejected", reason: `not applied: ${this.pipelineFault.reason}` }));
      return;
    }
    const expected = track ? track.max + 1 : 1;
    let missed: string | null = null;
    if (p.seq > expected) {
      missed = track
        ? `node "${node}" skipped from seq ${track.max} to ${p.seq} (boot ${p.boot}): ${p.seq - expected} pulse(s) missed`
        : `node "${node}" boot ${p.boot}: first pulse seen is seq ${p.seq}: ${p.seq - 1} pulse(s) missed`;
    }
    const next: SeqTrack = track ?? { max: 0, recent: new Set() };
    next.max = p.seq;
    next.recent.add(p.seq);
    if (next.recent.size > RECENT_SEQS) next.recent.delete(next.recent.values().next().value!);
    this.seqs.set(key, next);

    const input: EngineInput = { type: "pulse", detector: p.detector, at };
    const index = this.runEngine(input, this.newEvent({ ...base, status: "accepted" }), batch, effects);
    if (missed !== null) effects.alarms.push({ kind: "missed-pulses", subject: node, message: missed, eventIndex: index });
  }

  private applyTick(at: number, batch: Batch, effects: Effects): void {
    if (this.pipelineFault || this.state.faulted) return;
    const due = Object.values(this.state.quiet).some((deadline) => deadline <= at);
    if (!due) return;
    const input: EngineInput = { type: "tick", at };
    this.runEngine(input, this.newEvent({ kind: "tick", status: "accepted", receivedAt: at, input }), batch, effects);
  }

  private applyCommand(item: Extract<Item, { type: "command" }>, batch: Batch, effects: Effects): void {
    const at = this.options.now();
    const body = item.body;
    const by = item.user.name;
    const input: EngineInput =
      body.type === "hold" || body.type === "release"
        ? { type: "command", at, command: body.type, signal: body.signal, by, reason: body.reason }
        : body.type === "set" || body.type === "clear"
          ? { type: "command", at, command: body.type, latch: body.latch, by, reason: body.reason }
          : body.type === "zero"
            ? { type: "command", at, command: "zero", counter: body.counter, by, reason: body.reason }
            : { type: "command", at, command: "restart", by, reason: body.reason };
    this.ensureSession(at, item.user.id, batch, effects);
    const before = this.summary();
    if (body.type === "restart" && this.pipelineFault) {
      this.pipelineFault = null;
      effects.clears.push({ kind: "rulebook", subject: "pipeline" });
    }
    const index = this.runEngine(input, this.newEvent({ kind: "command", status: "accepted", receivedAt: at, userId: item.user.id, input }), batch, effects);
    const target = "signal" in body ? `signal ${body.signal}` : "latch" in body ? `latch ${body.latch}` : "counter" in body ? `counter ${body.counter}` : "rulebook";
    batch.audits.push({ userId: item.user.id, action: `command-${body.type}`, target, reason: body.reason, before, after: this.summary() });
    if (index === -1) effects.done.push(() => item.done(new Error(this.pipelineFault?.reason ?? "the command could not be applied")));
    else effects.done.push(() => item.done(null));
  }

  private applySwitch(item: Extract<Item, { type: "switch" }>, batch: Batch, effects: Effects): void {
    const at = this.options.now();
    const before = { rulebookVersion: this.rulebookVersion, ...this.summary() };
    const held = this.state.held;
    this.rulebook = item.rulebook;
    this.rulebookVersion = item.version;
    let state = initialState(this.rulebook, Math.max(at, this.state.clock));
    // A signaller's hold survives a new rulebook: only `release` lifts it.
    const keep = held.filter((signal) => signalIds(this.rulebook).includes(signal));
    if (keep.length) state = { ...state, held: keep };
    this.state = state;
    this.pipelineFault = null;
    this.inputsSinceSnapshot = 0;
    batch.snapshot = { rulebookVersion: item.version, session: this.session?.ref ?? null, state: this.snapshotState() };
    batch.audits.push({
      userId: item.userId,
      action: "live-rulebook-switched",
      target: `version ${item.version}`,
      reason: "a new rulebook version was published: the live layout restarts from its initial state",
      before,
      after: { rulebookVersion: item.version, ...this.summary() },
    });
    effects.updates.push({ event: null, patch: this.fullPatch() });
    effects.done.push(item.done);
  }

  private applySession(item: Extract<Item, { type: "session" }>, batch: Batch, effects: Effects): void {
    const at = this.options.now();
    if (item.action === "open") {
      if (!this.session) this.ensureSession(at, item.user.id, batch, effects);
    } else if (this.session) {
      batch.sessionCloses.push({ session: this.session.ref, closedAt: at, reason: `closed by ${item.user.name}` });
      this.session = null;
      effects.updates.push({ event: null, patch: { session: null } });
    }
    batch.audits.push({ userId: item.user.id, action: `session-${item.action}`, target: null, reason: null, before: null, after: null });
    effects.done.push(() => item.done(null));
  }

  /** Runs one engine input; returns the event's index in the batch, or -1 if the engine failed. */
  private runEngine(input: EngineInput, event: PendingEvent, batch: Batch, effects: Effects): number {
    let changes: Change[];
    try {
      const result = step(this.rulebook, this.state, input);
      this.state = result.state;
      changes = result.changes;
    } catch (err) {
      const reason = `the rulebook engine failed: ${(err as Error).message}`;
      this.deps.logger.error({ err, layout: this.slug }, "engine threw: fail-safe");
      event.status = "rejected";
      event.reason = reason;
      const index = this.record(batch, effects, event);
      this.failSafe(reason);
      effects.alarms.push({ kind: "rulebook", subject: "pipeline", message: `${reason}; every signal at danger until a restart`, eventIndex: index });
      return -1;
    }
    event.changes = changes;
    this.inputsSinceSnapshot++;
    const patch = this.patchFor(changes, iso(input.at));
    const index = this.record(batch, effects, event, patch);
    for (const change of changes) {
      const alarm = alarmOfChange(change);
      if (alarm) effects.alarms.push({ ...alarm, eventIndex: index });
    }
    return index;
  }

  private failSafe(reason: string): void {
    if (!this.pipelineFault) this.pipelineFault = { reason, at: this.options.now() };
    this.publishDiff(this.options.now());
    this.pushUpdate(null, { shown: this.shownNow(), faulted: this.faultedDto() });
  }

  // ───────────────────────────── after the commit ─────────────────────────────

  private afterCommit(batch: Batch, result: CommitResult, effects: Effects): void {
    for (const [temp, id] of result.sessionIds) {
      if (this.session && "temp" in this.session.ref && this.session.ref.temp === temp) this.session.ref = { id };
      for (const event of batch.events) if (event.session && "temp" in event.session && event.session.temp === temp) event.session = { id };
    }
    const now = this.options.now();
    this.publishDiff(now);
    const ids = new Map<PendingEvent, string>();
    batch.events.forEach((event, i) => ids.set(event, result.eventIds[i]));
    for (const update of effects.updates) {
      // A session opened in this batch had no id until the commit gave it one.
      if (update.patch.session && update.patch.session.id === 0) update.patch.session = this.sessionDto();
      this.pushUpdate(update.event ? { event: update.event, id: ids.get(update.event)! } : null, update.patch);
    }
    this.captureCommitted();
    for (const ack of effects.acks) ack();
    for (const done of effects.done) done();
    if (effects.alarms.length || effects.clears.length) {
      const sessionId = this.session && "id" in this.session.ref ? this.session.ref.id : null;
      const alarms = effects.alarms.map((a) => ({ ...a, eventId: a.eventIndex === null ? null : result.eventIds[a.eventIndex] }));
      const clears = effects.clears;
      this.alarmChain = this.alarmChain.then(async () => {
        try {
          for (const a of alarms) await raiseAlarm(this.deps, { layoutId: this.layoutId, kind: a.kind, subject: a.subject, message: a.message, eventId: a.eventId, sessionId });
          for (const c of clears) await clearAlarms(this.deps, this.layoutId, c.kind, c.subject);
        } catch (err) {
          this.deps.logger.error({ err, layout: this.slug }, "could not store an alarm");
        }
      });
    }
    this.armTimers();
  }

  /** Commands every signal whose shown aspect differs from what its board was last told. */
  private publishDiff(at: number): void {
    const shown = this.shownNow();
    for (const signal of this.published.keys()) if (!(signal in shown)) shown[signal] = "danger"; // dropped by a new rulebook
    for (const [signal, aspect] of Object.entries(shown)) {
      if (this.published.get(signal)?.aspect === aspect) continue;
      const rev = ++this.aspectRev;
      this.published.set(signal, { aspect, rev });
      this.publisher.publishAspect(this.slug, signal, aspect, rev, at);
    }
  }

  /** Publishes every signal again with its current rev (after the broker connection returns). */
  republish(): void {
    for (const [signal, { aspect, rev }] of this.published) this.publisher.publishAspect(this.slug, signal, aspect, rev, this.options.now());
  }

  private pushUpdate(entry: { event: PendingEvent; id: string } | null, patch: LiveUpdate["patch"]): void {
    const update: LiveUpdate = {
      slug: this.slug,
      version: ++this.version,
      event: entry ? this.eventDto(entry.event, entry.id) : null,
      changes: entry ? entry.event.changes.map(toChangeDto) : [],
      patch,
    };
    this.deps.bus.emit("live.update", update);
  }

  private armTimers(): void {
    if (this.stopped) return;
    if (this.quietTimer) clearTimeout(this.quietTimer);
    this.quietTimer = null;
    const deadlines = Object.values(this.state.quiet);
    if (deadlines.length > 0 && !this.state.faulted && !this.pipelineFault) {
      const deadline = Math.min(...deadlines);
      this.quietTimer = setTimeout(() => this.push({ type: "tick", at: Math.max(this.options.now(), deadline) }), Math.max(0, deadline - this.options.now()));
      this.quietTimer.unref?.();
    }
    if (this.idleTimer) clearTimeout(this.idleTimer);
    this.idleTimer = null;
    if (this.session) {
      const due = this.session.lastActivity + this.options.sessionIdleMs - this.options.now();
      this.idleTimer = setTimeout(() => this.push({ type: "idle" }), Math.max(0, due) + 5);
      this.idleTimer.unref?.();
    }
  }

  // ───────────────────────────── views ─────────────────────────────

  private shownNow(): Record<string, Aspect> {
    let shown: Record<string, Aspect>;
    try {
      shown = shownAspects(this.rulebook, this.state);
    } catch (err) {
      // Even working out the aspects failed: every signal the boards know goes to danger.
      if (!this.pipelineFault) this.pipelineFault = { reason: `the rulebook engine failed: ${(err as Error).message}`, at: this.options.now() };
      shown = Object.fromEntries([...this.published.keys()].map((signal) => [signal, "danger" as Aspect]));
    }
    if (this.pipelineFault || this.outage) for (const signal of Object.keys(shown)) shown[signal] = "danger";
    return shown;
  }

  private faultedDto(): LiveState["faulted"] {
    const fault = this.pipelineFault ?? this.outage ?? this.state.faulted;
    return fault ? { reason: fault.reason, at: iso(fault.at) } : null;
  }

  private sessionDto(): SessionDto | null {
    if (!this.session) return null;
    return {
      id: "id" in this.session.ref ? this.session.ref.id : 0,
      openedAt: iso(this.session.openedAt),
      closedAt: null,
      rulebookVersion: this.session.rulebookVersion,
    };
  }

  private summary() {
    return {
      shown: this.shownNow(),
      latches: this.state.latches,
      counters: this.state.counters,
      selectors: this.state.selectors,
      held: this.state.held,
    };
  }

  private noteSince(changes: Change[], at: string): void {
    for (const change of changes) {
      if (change.kind === "latch" || change.kind === "counter" || change.kind === "selector") this.since[`${change.kind}:${change.name}`] = at;
      else if (change.kind === "shown") this.since[`signal:${change.name}`] = at;
    }
  }

  private patchFor(changes: Change[], at: string): LiveUpdate["patch"] {
    this.noteSince(changes, at);
    const patch: LiveUpdate["patch"] = {};
    for (const change of changes) {
      switch (change.kind) {
        case "latch":
          patch.latches = this.state.latches;
          break;
        case "counter":
          patch.counters = this.state.counters;
          break;
        case "selector":
          patch.selectors = this.state.selectors;
          break;
        case "quiet":
          patch.quiet = this.quietDto();
          break;
        case "shown":
        case "held":
        case "fault":
        case "wanted":
          patch.shown = this.shownNow();
          patch.held = this.state.held;
          patch.faulted = this.faultedDto();
          break;
        default:
          break;
      }
    }
    if (changes.length > 0) patch.since = this.since;
    return patch;
  }

  /** Every field of the live state but slug, version and alarms, as it stands in memory. */
  private fullPatch(): Required<Omit<LiveUpdate["patch"], "alarms">> {
    return {
      rulebookVersion: this.rulebookVersion,
      session: this.sessionDto(),
      shown: this.shownNow(),
      latches: this.state.latches,
      counters: this.state.counters,
      selectors: this.state.selectors,
      held: this.state.held,
      quiet: this.quietDto(),
      faulted: this.faultedDto(),
      nodes: this.nodesDto(),
      since: { ...this.since },
    };
  }

  /** Every node of the layout, offline until it has said otherwise. */
  private nodesDto(): Record<string, NodeLiveDto> {
    const nodes: Record<string, NodeLiveDto> = {};
    for (const id of this.nodes.keys()) nodes[id] = this.nodeLive.get(id) ?? { online: false, since: null, boot: null, fw: null };
    return nodes;
  }

  private quietDto(): Record<string, string> {
    return Object.fromEntries(Object.entries(this.state.quiet).map(([rule, deadline]) => [rule, iso(deadline)]));
  }

  private eventDto(event: PendingEvent, id: string): LiveEventDto {
    return {
      id,
      kind: event.kind,
      status: event.status,
      reason: event.reason,
      node: event.node,
      boot: event.boot,
      seq: event.seq,
      detector: event.detector,
      receivedAt: iso(event.receivedAt),
      boardT: event.boardT,
    };
  }

  /** The live state as of the last commit (nothing is shown before it is stored), alarms aside. */
  private captureCommitted(): void {
    this.committed = { slug: this.slug, version: this.version, ...this.fullPatch() };
  }

  /**
   * The full live state (CONTRACT.md §6) as committed; alarms come from the database. A
   * fail-safe in force shows at once (danger needs no commit).
   */
  async liveState(): Promise<LiveState> {
    const alarms = await listAlarms(this.deps, this.layoutId, "open");
    const state: LiveState = { ...this.committed!, version: this.version, alarms };
    if (this.pipelineFault || this.outage) {
      state.shown = Object.fromEntries(Object.keys(state.shown).map((signal) => [signal, "danger" as const]));
      state.faulted = this.faultedDto();
    }
    return state;
  }

  /** For tests: the engine state as it stands. */
  engineState(): EngineState {
    return this.state;
  }
}

function toChangeDto(change: Change): ChangeDto {
  const dto: ChangeDto = { kind: change.kind, name: change.name, from: change.from, to: change.to };
  if (change.rule !== undefined) dto.rule = change.rule;
  if (change.command !== undefined) dto.command = change.command;
  if (change.detail !== undefined) dto.detail = change.detail;
  return dto;
}
