/**
 * One runner per live layout: the thin shell around the pure core (core/apply.ts).
 *
 * Inputs (board messages, the clock, signaller commands, rulebook switches) join one
 * mailbox and are taken in batches: each input goes through `apply`, the batch's rows are
 * written in ONE transaction, and only after COMMIT does the shell run the effects: aspect
 * commands, `applied` confirmations, PUBACKs, alarms, and ONE push to browsers per batch
 * (a burst of 2,000 pulses a second is a few dozen pushes, not 2,000). Boards come first: the
 * push waits for the next turn of the event loop, after mqtt.js has written the batch's
 * commands (it writes on the next tick), so no number of browsers delays a signal.
 *
 * Fail-safe: danger needs no commit. When the engine throws, or a commit has been failing or
 * hanging for `failsafeAfterMs` (FAILSAFE_AFTER_MS), every signal is commanded to danger at
 * once. The watchdog that decides the latter is a timer that never waits on a query.
 */
import type pg from "pg";
import type { AlarmDto, CommandBody, LivePatch, LiveState, LiveStep, LiveUpdate } from "@shared/contract/live";
import type { LayoutHealth } from "@shared/contract/rest";
import type { EngineState } from "@shared/rulebook/engine";
import type { Rulebook } from "@shared/rulebook/schema";
import { commitBatch, emptyBatch, poolQuery, type Batch, type CommitResult, type PendingEvent } from "./eventLog";
import { AlarmOutbox, type AlarmEffect } from "./alarmOutbox";
import { Committer } from "./committer";
import { appendStep, apply, declareOutage, endOutage, finishBatch, nextDue, type CommandUser, type CoreInput } from "./core/apply";
import { currentBoots, waitingCount } from "./core/sequencer";
import { pointsCommands } from "./core/points";
import { aspectCommands, faultedDto, fullPatch, revReservation, sessionDto, shownNow, type Core, type CoreOptions, type Effect } from "./core/state";
import { toChangeDto, toEventDto } from "./dto";
import { ingestMessage, type NodeEntry } from "./ingest";
import type { LayoutLink } from "./layoutLink";
import { Mailbox } from "./mailbox";
import type { RuntimeDeps } from "./ports";
import { RECORDS_WAIT_MS, RecordsHold } from "./recordsHold";
import { systemClock, type Cancel, type Clock } from "../clock";
import { recoverPointsChecks } from "./pointsRecovery";
import { recoverCore } from "./recovery";

/** CONTRACT.md §2: the wait for a missing seq. */
export const REORDER_WAIT_MS = 10_000;
/** CONTRACT.md §2: danger everywhere when the layout cannot commit for this long. */
export const FAILSAFE_AFTER_MS = 2_000;
/** How often the watchdog looks; well inside FAILSAFE_AFTER_MS. */
const WATCHDOG_TICK_MS = 100;
/** With nothing to commit, the watchdog proves the database answers this often. */
const PROBE_EVERY_MS = 1_000;

/** The runner's time and timers come from its `Clock` (`now`, `after`): tests pass a hand-driven one. */
export interface RunnerOptions extends CoreOptions, Clock {
  failsafeAfterMs: number;
  /** Most inputs in one group commit. */
  maxBatch: number;
}

export const DEFAULT_RUNNER_OPTIONS: RunnerOptions = {
  sessionIdleMs: 30 * 60_000,
  snapshotEvery: 1000,
  reorderWaitMs: REORDER_WAIT_MS,
  failsafeAfterMs: FAILSAFE_AFTER_MS,
  maxBatch: 5_000,
  ...systemClock,
};

export type { CommandUser, LayoutHealth };

type Item = { input: CoreInput; at: number };
type Settle = (error: string | null) => void;
/** A board message as the link hands it over: judged (ingest.ts) when it joins the mailbox. */
export type BoardMessage = { topic: string; payload: Buffer; retain: boolean; receivedAt: number; ack: () => void };

export class LayoutRunner {
  readonly layoutId: number;
  readonly slug: string;
  private core!: Core;
  private link: LayoutLink | null = null;
  private readonly mailbox = new Mailbox<Item>();
  private readonly committer: Committer;
  private readonly alarms: AlarmOutbox;
  /** Handles of board messages and callers, settled after their commit. */
  private readonly settles = new Map<number, Settle>();
  private nextRef = 0;
  /** Socket version: +1 per pushed step. */
  private version = 0;
  private busy = false;
  private stopped = false;
  private clockTimer: Cancel | null = null;
  private watchdog: Cancel | null = null;
  private lastOkAt = 0;
  private idleWaiters: (() => void)[] = [];
  /** Committed pushes waiting for their turn (after the MQTT writes), in order. */
  private pushes: { update: LiveUpdate; patches: LivePatch[] }[] = [];
  private pushTimer: NodeJS.Immediate | null = null;
  private committed: Omit<LiveState, "alarms"> | null = null;
  private alarmsSeen: AlarmDto[] = [];
  /** Changes waiting for the batch in hand to finish (`betweenBatches`). */
  private between: (() => void)[] = [];
  /** Boards' messages waiting for records being saved (recordsHold.ts). */
  private readonly hold: RecordsHold<BoardMessage>;

  constructor(
    private readonly deps: RuntimeDeps,
    private readonly pool: pg.Pool,
    layout: { id: number; slug: string },
    private readonly options: RunnerOptions,
  ) {
    this.layoutId = layout.id;
    this.slug = layout.slug;
    this.committer = new Committer(pool, layout.id, deps.logger, options.now);
    this.alarms = new AlarmOutbox(deps, layout.id, layout.slug);
    this.hold = new RecordsHold({ clock: options, waitMs: RECORDS_WAIT_MS, release: (messages, final) => messages.forEach((m) => this.receive(m, final)) });
  }

  get rulebook(): Rulebook {
    return this.core.rulebook;
  }

  get rulebookVersion(): number {
    return this.core.rulebookVersion;
  }

  /** Recovery, then the link: online status, every signal with a new rev, confirmations. */
  async start(link: LayoutLink): Promise<void> {
    const { core, batch } = await recoverCore(poolQuery(this.pool), { id: this.layoutId, slug: this.slug }, this.options, this.options.now());
    this.core = core;
    await recoverPointsChecks(poolQuery(this.pool), core, () => this.deps.alarms.listOpen(this.layoutId), this.options.now(), this.deps.logger);
    if (batch) await commitBatch(this.pool, batch);
    await this.committer.start();
    await this.pool.query(`UPDATE layouts SET aspect_rev = GREATEST(aspect_rev, $2) WHERE id = $1`, [this.layoutId, revReservation(this.core)]);
    this.captureCommitted();
    this.lastOkAt = this.options.now();
    this.link = link;
    link.start();
    this.armClock();
    this.armWatchdog();
  }

  /** The link (re)connected: command every signal again with a new rev, and confirm every current boot. */
  onConnect(): void {
    if (!this.core) return;
    this.publishAspects(true);
    // Those revs are new: keep the stored reservation ahead of them (a restart never reuses a rev).
    this.pool
      .query(`UPDATE layouts SET aspect_rev = GREATEST(aspect_rev, $2) WHERE id = $1`, [this.layoutId, revReservation(this.core)])
      .catch((err) => this.deps.logger.warn({ err, layout: this.slug }, "could not store the aspect rev"));
    for (const { node, boot, seq } of currentBoots(this.core.seqs)) if (seq > 0) this.link?.publishApplied(node, { boot, seq });
  }

  /**
   * A change of the records was announced (recordsFollower.ts): until the returned function is
   * called (adopted or given up), a message only the new records can make right waits for them.
   */
  expectRecords(): () => void {
    return this.hold.expect();
  }

  /**
   * Runs `change` on the core between two batches: at once when none is in hand, else right
   * after the current one's effects (recordsFollower.ts: records saved while running).
   */
  betweenBatches(change: (core: Core, link: LayoutLink | null) => void): Promise<void> {
    return new Promise((resolve, reject) => {
      const run = () => {
        try {
          change(this.core, this.link);
          resolve();
        } catch (err) {
          reject(err as Error);
        }
      };
      if (this.busy) this.between.push(run);
      else run();
    });
  }

  /** The boards of this layout, for ingest. */
  nodeDirectory(): ReadonlyMap<string, NodeEntry> {
    return this.core?.nodes ?? new Map();
  }

  // ───────────────────────────── inputs ─────────────────────────────

  private ref(settle: Settle): number {
    const ref = ++this.nextRef;
    this.settles.set(ref, settle);
    return ref;
  }

  private push(input: CoreInput, at = this.options.now()): void {
    if (this.stopped) return;
    this.mailbox.enqueue({ input, at });
    if (!this.busy) void this.drain();
  }

  message(m: BoardMessage): void {
    this.receive(m, false);
  }

  /** Judges a board message against the directory adopted now; it waits instead when records being saved may decide it. */
  private receive(m: BoardMessage, final: boolean): void {
    if (this.stopped) return;
    const result = ingestMessage(m.topic, m.payload, (slug) => (slug === this.slug ? this.nodeDirectory() : undefined));
    if (!final && result.node !== null && this.hold.mustWait(result.node, !result.ok && result.directory === true)) {
      this.hold.add(result.node, m);
      return;
    }
    const ref = this.ref(() => m.ack());
    this.push({ type: "message", retain: m.retain, message: { topic: m.topic, payload: m.payload, receivedAt: m.receivedAt, result, ref } }, m.receivedAt);
  }

  private ask(make: (ref: number) => CoreInput): Promise<void> {
    return new Promise((resolve, reject) => this.push(make(this.ref((error) => (error ? reject(new Error(error)) : resolve())))));
  }

  command(body: CommandBody, user: CommandUser): Promise<void> {
    return this.ask((ref) => ({ type: "command", body, user, ref }));
  }

  switchRulebook(version: number, rulebook: Rulebook, userId: number | null): Promise<void> {
    return this.ask((ref) => ({ type: "switch", version, rulebook, userId, ref }));
  }

  sessionControl(action: "open" | "close", user: CommandUser): Promise<void> {
    return this.ask((ref) => ({ type: "session", action, user, ref }));
  }

  /** Resolves when the mailbox is empty and nothing is being committed (tests, clean stop). */
  idle(): Promise<void> {
    if (this.quiet()) return Promise.resolve();
    return new Promise((resolve) => this.idleWaiters.push(resolve));
  }

  /** Clean stop: finish what is queued, then the timers and the link. */
  async stop(): Promise<void> {
    await this.idle();
    await this.alarms.flushed();
    this.halt();
    await this.link?.stop();
  }

  /** Taken out of service (the layout was archived): every signal to danger, then a clean stop. */
  async retire(reason: string): Promise<void> {
    await this.idle();
    this.core.pipelineFault ??= { reason, at: this.options.now() };
    this.failSafeNow();
    await this.stop();
  }

  /** Crash: drop the mailbox and timers at once, acknowledging nothing more. */
  abandon(): void {
    this.halt();
    this.link?.crash();
  }

  /** Nothing queued, nothing being committed, nothing left to push. */
  private quiet(): boolean {
    return !this.busy && this.mailbox.size === 0 && this.pushes.length === 0;
  }

  private wakeIdle(): void {
    if (this.quiet() || this.stopped) for (const waiter of this.idleWaiters.splice(0)) waiter();
  }

  private halt(): void {
    this.stopped = true;
    if (this.pushTimer) clearImmediate(this.pushTimer);
    this.pushes = [];
    this.committer.stop();
    this.mailbox.clear();
    this.hold.clear();
    this.clockTimer?.();
    this.watchdog?.();
    for (const waiter of this.idleWaiters.splice(0)) waiter();
  }

  // ───────────────────────────── the loop ─────────────────────────────

  private async drain(): Promise<void> {
    this.busy = true;
    try {
      while (this.mailbox.size > 0 && !this.stopped) {
        const { batch, effects } = this.build();
        const empty = batch.aspectRev === null;
        const result: CommitResult = empty ? { eventIds: [], sessionIds: new Map() } : await this.committer.commit(batch, () => this.watch());
        if (this.stopped) return;
        this.lastOkAt = this.options.now();
        if (endOutage(this.core)) this.deps.logger.warn({ layout: this.slug }, "database back: committing again");
        this.afterCommit(batch, result, effects);
        for (const run of this.between.splice(0)) run();
      }
    } catch (err) {
      if (!this.stopped) {
        this.deps.logger.error({ err, layout: this.slug }, "live runner stopped on an error: fail-safe");
        this.core.pipelineFault ??= { reason: `live runner error: ${(err as Error).message}`, at: this.options.now() };
        this.failSafeNow();
      }
    } finally {
      this.busy = false;
      for (const run of this.between.splice(0)) run();
      // A change run just now may have queued messages (those waiting for records) and started the next drain itself.
      if (!this.busy) {
        if (this.mailbox.size === 0 || this.stopped) this.wakeIdle();
        else void this.drain();
      }
    }
  }

  private build(): { batch: Batch; effects: Effect[] } {
    const batch = emptyBatch(this.layoutId);
    const effects: Effect[] = [];
    for (const item of this.mailbox.take(this.options.maxBatch, (i) => i.input.type === "switch")) {
      const step = apply(this.core, item.input, item.at);
      this.core = step.core;
      const offset = appendStep(batch, step);
      for (const effect of step.effects) {
        if ((effect.type === "update" || effect.type === "alarm") && effect.event !== null) effects.push({ ...effect, event: effect.event + offset });
        else effects.push(effect);
        if (effect.type === "fail-safe") this.failSafeNow();
      }
    }
    finishBatch(this.core, batch);
    return { batch, effects };
  }

  /** The watchdog: commits failing or hanging too long → danger everywhere, without waiting on anything. */
  private watch(): void {
    if (this.stopped) return;
    const now = this.options.now();
    const since = this.committer.failingSince();
    if (since !== null && now - since >= this.options.failsafeAfterMs) {
      if (declareOutage(this.core, `the database has not committed for ${now - since} ms`, now)) {
        this.deps.logger.error({ layout: this.slug }, "cannot commit: every signal to danger");
        this.failSafeNow();
      }
    } else if (since === null && !this.busy && now - this.lastOkAt >= PROBE_EVERY_MS) {
      this.lastOkAt = now;
      this.committer
        .probe()
        .then(() => {
          if (!this.busy && endOutage(this.core)) this.afterCommit(emptyBatch(this.layoutId), { eventIds: [], sessionIds: new Map() }, []);
        })
        .catch(() => undefined);
    }
  }

  private failSafeNow(): void {
    this.publishAspects();
    const patch: LivePatch = { shown: shownNow(this.core), faulted: faultedDto(this.core) };
    this.pushSteps([this.step(null)], [patch], patch);
  }

  // ───────────────────────────── after the commit ─────────────────────────────

  private afterCommit(batch: Batch, result: CommitResult, effects: Effect[]): void {
    const core = this.core;
    for (const [temp, id] of result.sessionIds) {
      if (core.session && "temp" in core.session.ref && core.session.ref.temp === temp) core.session.ref = { id };
      for (const event of batch.events) if (event.session && "temp" in event.session && event.session.temp === temp) event.session = { id };
    }
    const now = this.options.now();
    this.publishAspects();
    const coveredNow = new Map<string, { node: string; boot: string; seq: number }>();
    const alarms: AlarmEffect[] = [];
    const steps: LiveStep[] = [];
    const patches: LivePatch[] = [];
    const patch: LivePatch = {};
    for (const effect of effects) {
      switch (effect.type) {
        case "update": {
          const event = effect.event === null ? null : batch.events[effect.event];
          // A session opened in this batch had no id until the commit gave it one.
          if (effect.patch.session && effect.patch.session.id === 0) effect.patch.session = sessionDto(core);
          steps.push(this.step(event && effect.event !== null ? { event, id: result.eventIds[effect.event] } : null));
          patches.push(effect.patch);
          // Each field's value is whole, so the batch's patch is the last one of each field.
          Object.assign(patch, effect.patch);
          break;
        }
        case "covered":
          coveredNow.set(`${effect.node}\u0000${effect.boot}`, effect);
          break;
        case "alarm":
          alarms.push({ effect, eventId: effect.event === null ? null : (result.eventIds[effect.event] ?? null) });
          break;
        case "clear":
          alarms.push({ effect, eventId: null });
          break;
        default:
          break;
      }
    }
    this.pushSteps(steps, patches, patch);
    this.captureCommitted();
    // One confirmation per board per commit, only now that the commit covers it.
    for (const { node, boot, seq } of coveredNow.values()) if (seq > 0) this.link?.publishApplied(node, { boot, seq });
    for (const effect of effects) {
      if (effect.type !== "settle") continue;
      const settle = this.settles.get(effect.ref);
      this.settles.delete(effect.ref);
      settle?.(effect.error);
    }
    if (alarms.length) this.alarms.send(alarms, core.session && "id" in core.session.ref ? core.session.ref.id : null);
    this.armClock(now);
  }

  /** Commands every signal whose shown aspect differs from what its board was last told (all of them with `all`). */
  private publishAspects(all = false): void {
    const at = this.options.now();
    for (const { signal, aspect, rev } of aspectCommands(this.core, all)) this.link?.publishAspect(signal, aspect, rev, at);
    // Points commands go out only after the commit that threw them, like aspects.
    for (const { points, to, rev } of pointsCommands(this.core, all)) this.link?.publishPointsSet(points, to, rev, at);
  }

  /** Numbers one committed step (the next version) for the push. */
  private step(entry: { event: PendingEvent; id: string } | null): LiveStep {
    return {
      version: ++this.version,
      event: entry ? toEventDto(entry.event, entry.id) : null,
      changes: entry ? entry.event.changes.map(toChangeDto) : [],
    };
  }

  /** One push for a batch's steps (numbered already by `step`), sent on the next turn. */
  private pushSteps(steps: LiveStep[], patches: LivePatch[], patch: LivePatch): void {
    if (steps.length === 0) return;
    this.pushes.push({ update: { slug: this.slug, from: steps[0].version, version: steps[steps.length - 1].version, steps, patch }, patches });
    this.pushTimer ??= setImmediate(() => this.flushPushes());
  }

  private flushPushes(): void {
    this.pushTimer = null;
    for (const { update, patches } of this.pushes.splice(0)) this.emitUpdate(update, patches);
    this.wakeIdle();
  }

  private emitUpdate(update: LiveUpdate, patches: LivePatch[]): void {
    try {
      this.deps.bus.emit("live.update", update, patches);
    } catch (err) {
      // A listener's failure is its own: the layout goes on.
      this.deps.logger.error({ err, layout: this.slug }, "a live.update listener threw");
    }
  }

  private armClock(now = this.options.now()): void {
    if (this.stopped) return;
    this.clockTimer?.();
    this.clockTimer = null;
    const due = nextDue(this.core);
    if (due === null) return;
    this.clockTimer = this.options.after(Math.max(0, due - now) + 1, () => this.push({ type: "tick" }, Math.max(this.options.now(), due)));
  }

  /** The watchdog's next look, on the runner's clock (an interval that re-arms itself). */
  private armWatchdog(): void {
    this.watchdog = this.options.after(WATCHDOG_TICK_MS, () => {
      this.watch();
      if (!this.stopped) this.armWatchdog();
    });
  }

  // ───────────────────────────── views ─────────────────────────────

  /** The live state as of the last commit (nothing is shown before it is stored). */
  private captureCommitted(): void {
    this.committed = { slug: this.slug, version: this.version, ...fullPatch(this.core) };
  }

  health(): LayoutHealth {
    const now = this.options.now();
    if (this.core.pipelineFault || this.core.outage || this.core.state.faulted) return "fail-safe";
    const failing = this.committer.failingSince();
    const down = this.link?.downSince() ?? null;
    if ((failing !== null && now - failing >= this.options.failsafeAfterMs) || (down !== null && now - down >= this.options.failsafeAfterMs)) return "stalled";
    return "live";
  }

  linkConnected(): boolean {
    return this.link?.connected() ?? false;
  }

  /** Board messages received on this layout's link and not yet acknowledged (not yet committed). */
  pendingAcks(): number {
    return this.link?.pendingAcks() ?? 0;
  }

  /** Messages waiting for a missing seq (for tests and health). */
  waiting(): number {
    return waitingCount(this.core.seqs);
  }

  /** Board messages waiting for records being saved, and the changes of the records announced and not yet adopted (for tests and health). */
  held(): { messages: number; changes: number } {
    return { messages: this.hold.size, changes: this.hold.changesExpected };
  }

  /**
   * The full live state (CONTRACT.md §6) as committed; alarms from the database, or from
   * memory (marked stale) when it does not answer in time. A fail-safe in force shows at once.
   */
  async liveState(alarmTimeoutMs = 1_000): Promise<LiveState> {
    let stale = false;
    let timer: NodeJS.Timeout | undefined;
    try {
      this.alarmsSeen = await Promise.race([
        this.deps.alarms.listOpen(this.layoutId),
        new Promise<never>((_, reject) => (timer = setTimeout(() => reject(new Error("alarms did not load in time")), alarmTimeoutMs))),
      ]);
    } catch {
      stale = true;
    } finally {
      clearTimeout(timer);
    }
    const state: LiveState = { ...this.committed!, version: this.version, alarms: this.alarmsSeen };
    if (this.core.pipelineFault || this.core.outage) {
      state.shown = Object.fromEntries(Object.keys(state.shown).map((signal) => [signal, "danger" as const]));
      state.faulted = faultedDto(this.core);
    }
    if (stale || this.core.outage) state.stale = true;
    return state;
  }

  /** For tests: the engine state as it stands. */
  engineState(): EngineState {
    return this.core.state;
  }
}
