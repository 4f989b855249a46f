/**
 * The watchers' way to the database: a bounded queue of alarm writes, written in batches
 * (service.writeAlarms: a few statements per batch, whatever its size), one batch at a time.
 *
 * Repeats of an alarm that is waiting to be written are folded into it (count + 1, latest
 * message and time), so a chattering detector adds nothing to the queue's length. Only
 * raises and clears alternating faster than the database takes them could fill it; then the
 * oldest writes are dropped and the number dropped is logged — never an unbounded backlog.
 */
import type { AppDeps } from "../../deps";
import { writeAlarms, type AlarmWrite } from "./service";

export const MAX_QUEUED_ALARM_WRITES = 5_000;
/** Most writes per batch (the arrays of one statement). */
export const ALARM_BATCH_MAX = 1_000;
const RETRY_AFTER_MS = 1_000;
/** A write that fails this many times in a row is dropped (logged) so the rest can go on. */
const MAX_ATTEMPTS = 5;

export class AlarmWriter {
  private queue: AlarmWrite[] = [];
  /** The raise waiting in the queue per alarm (layout|kind|subject), to fold repeats into. */
  private waitingRaise = new Map<string, Extract<AlarmWrite, { op: "raise" }>>();
  private writing: Promise<void> | null = null;
  private dropped = 0;
  private attempts = 0;
  private retryTimer: NodeJS.Timeout | null = null;
  private stopped = false;

  constructor(private readonly deps: AppDeps) {}

  /** `repeat` = another occurrence of an alarm already open (or waiting to be written). */
  enqueue(write: { op: "raise" | "repeat" | "clear"; layoutId: number; kind: AlarmWrite["kind"]; subject: string | null; message?: string; at?: number; eventId?: string | null }): void {
    if (this.stopped) return;
    const key = `${write.layoutId}|${write.kind}|${write.subject ?? ""}`;
    const at = new Date(write.at ?? Date.now());
    if (write.op === "clear") {
      this.waitingRaise.delete(key);
      this.push({ op: "clear", layoutId: write.layoutId, kind: write.kind, subject: write.subject });
    } else {
      const waiting = this.waitingRaise.get(key);
      if (waiting) {
        waiting.count++;
        waiting.message = write.message ?? waiting.message;
        if (at > waiting.lastAt) waiting.lastAt = at;
      } else {
        const raise: Extract<AlarmWrite, { op: "raise" }> = {
          op: "raise",
          layoutId: write.layoutId,
          kind: write.kind,
          subject: write.subject,
          message: write.message ?? "",
          eventId: write.eventId ?? null,
          count: 1,
          firstAt: at,
          lastAt: at,
        };
        this.waitingRaise.set(key, raise);
        this.push(raise);
      }
    }
    this.kick();
  }

  /** Resolves when everything queued so far is written (or dropped). */
  async idle(): Promise<void> {
    while (this.writing || (this.queue.length > 0 && !this.stopped)) {
      if (!this.writing) this.kick();
      await (this.writing ?? new Promise((resolve) => setTimeout(resolve, 10)));
    }
  }

  queued(): number {
    return this.queue.length;
  }

  droppedCount(): number {
    return this.dropped;
  }

  async stop(): Promise<void> {
    await this.idle();
    this.stopped = true;
    if (this.retryTimer) clearTimeout(this.retryTimer);
  }

  private push(write: AlarmWrite): void {
    this.queue.push(write);
    if (this.queue.length > MAX_QUEUED_ALARM_WRITES) {
      const oldest = this.queue.shift()!;
      if (oldest.op === "raise") this.forget(oldest);
      this.dropped++;
      // One line per thousand, not one per write: the log must not become the next backlog.
      if (this.dropped % 1_000 === 1) this.deps.logger.warn({ dropped: this.dropped, queued: this.queue.length }, "alarm writes dropped: the database is not keeping up");
    }
  }

  private forget(raise: Extract<AlarmWrite, { op: "raise" }>): void {
    const key = `${raise.layoutId}|${raise.kind}|${raise.subject ?? ""}`;
    if (this.waitingRaise.get(key) === raise) this.waitingRaise.delete(key);
  }

  private kick(): void {
    if (this.writing || this.retryTimer || this.stopped || this.queue.length === 0) return;
    this.writing = this.writeBatch().finally(() => {
      this.writing = null;
      this.kick();
    });
  }

  private async writeBatch(): Promise<void> {
    const batch = this.queue.slice(0, ALARM_BATCH_MAX);
    // Taken out of the fold map first: a repeat arriving during the write starts a new raise.
    for (const w of batch) if (w.op === "raise") this.forget(w);
    this.queue.splice(0, batch.length);
    try {
      await writeAlarms(this.deps, batch);
      this.attempts = 0;
    } catch (err) {
      this.attempts++;
      if (this.attempts >= MAX_ATTEMPTS) {
        this.deps.logger.error({ err, writes: batch.length }, "alarm writes failed repeatedly: dropped");
        this.dropped += batch.length;
        this.attempts = 0;
        return;
      }
      this.deps.logger.warn({ err, writes: batch.length }, "alarm writes failed: retrying");
      // Back at the front, in order; the queue bound still holds (oldest go first).
      this.queue.unshift(...batch);
      for (const w of batch) if (w.op === "raise") this.waitingRaise.set(`${w.layoutId}|${w.kind}|${w.subject ?? ""}`, w);
      while (this.queue.length > MAX_QUEUED_ALARM_WRITES) {
        const oldest = this.queue.shift()!;
        if (oldest.op === "raise") this.forget(oldest);
        this.dropped++;
      }
      this.retryTimer = setTimeout(() => {
        this.retryTimer = null;
        this.kick();
      }, RETRY_AFTER_MS);
      this.retryTimer.unref?.();
    }
  }
}
