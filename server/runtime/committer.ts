/**
 * Commits one layout's batches until they are stored, telling three failures apart:
 * - an outage (connection refused or lost, a timeout): retried, unchanged, with back-off;
 *   the watchdog (runner.ts) sees `failingSince()` and goes to fail-safe meanwhile;
 * - a reply lost after the commit went through (a timeout on a frozen server that later
 *   resumes): before every retry the log is asked whether the batch's events are there, so a
 *   batch is never stored twice;
 * - bad data (a value PostgreSQL refuses, SQLSTATE classes 22/23/54): not an outage. The batch
 *   is stored again with every text made safe, then event by event, and an event that still
 *   fails is stored on its own as rejected with the reason. The layout goes on.
 */
import type pg from "pg";
import type { Logger } from "../logger";
import { commitBatch, emptyBatch, eventIdsAfter, lastEventId, poolQuery, type Batch, type CommitResult, type PendingEvent, type SessionRef } from "./eventLog";

const RETRY_FIRST_MS = 50;
const RETRY_MAX_MS = 1_000;
const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

/** SQLSTATE classes that mean "this data", not "this database": data exception, integrity, program limit. */
export function isDataError(err: unknown): boolean {
  const code = (err as { code?: unknown })?.code;
  return typeof code === "string" && /^(22|23|54)/.test(code);
}

/** Any string in a value, made storable: no NUL (PostgreSQL text and jsonb refuse it), no lone surrogates. */
function safeText(value: string): string {
  return value.replace(/\u0000/g, "\\u0000").replace(/[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/g, "\uFFFD");
}

function safeValue(value: unknown): unknown {
  if (typeof value === "string") return safeText(value);
  if (typeof value === "number") return Number.isFinite(value) ? value : null;
  if (Array.isArray(value)) return value.map(safeValue);
  if (value && typeof value === "object") return Object.fromEntries(Object.entries(value).map(([k, v]) => [safeText(k), safeValue(v)]));
  return value;
}

function safeEvent(event: PendingEvent): PendingEvent {
  return { ...event, ...(safeValue({ ...event, session: null, changes: [] }) as object), session: event.session, changes: safeValue(event.changes) as PendingEvent["changes"] } as PendingEvent;
}

export class Committer {
  /** The layout's newest live event id: where a lost commit's events would start. */
  private lastId = "0";
  private failing: number | null = null;
  private stopped = false;

  constructor(
    private readonly pool: pg.Pool,
    private readonly layoutId: number,
    private readonly logger: Logger,
    private readonly now: () => number,
  ) {}

  async start(): Promise<void> {
    this.lastId = await lastEventId(poolQuery(this.pool), this.layoutId);
  }

  stop(): void {
    this.stopped = true;
  }

  /** Since when the current commit has been failing or hanging (null: not failing). */
  failingSince(): number | null {
    return this.failing;
  }

  /** Stores the batch; resolves once it is committed. Throws only when stopped. */
  async commit(batch: Batch, onAttemptFailed: (err: Error) => void): Promise<CommitResult> {
    this.failing = this.now();
    let delay = RETRY_FIRST_MS;
    let uncertain = false;
    try {
      for (let attempt = 1; ; attempt++) {
        try {
          if (uncertain && batch.events.length > 0) {
            const landed = await this.landed(batch);
            if (landed) return landed;
          }
          const result = await commitBatch(this.pool, batch);
          this.noteIds(result);
          return result;
        } catch (err) {
          if (this.stopped) throw err;
          if (isDataError(err) && !uncertain) return await this.commitPoisoned(batch, err as Error);
          uncertain = true;
          if (attempt === 1) this.logger.warn({ err, layoutId: this.layoutId }, "group commit failed; retrying, nothing acknowledged meanwhile");
          onAttemptFailed(err as Error);
          await sleep(delay);
          delay = Math.min(delay * 2, RETRY_MAX_MS);
        }
      }
    } finally {
      this.failing = null;
    }
  }

  /** A database round trip that proves it answers (the watchdog's probe while nothing is queued). */
  async probe(): Promise<void> {
    this.failing ??= this.now();
    try {
      await this.pool.query("SELECT 1");
    } finally {
      this.failing = null;
    }
  }

  private noteIds(result: CommitResult): void {
    if (result.eventIds.length) this.lastId = result.eventIds[result.eventIds.length - 1];
  }

  /** After an uncertain failure: did the batch commit after all? Its event ids if so. */
  private async landed(batch: Batch): Promise<CommitResult | null> {
    const after = await eventIdsAfter(poolQuery(this.pool), this.layoutId, this.lastId);
    const rows = after.slice(-batch.events.length);
    const same =
      rows.length === batch.events.length &&
      rows.every((r, i) => r.kind === batch.events[i].kind && r.node_id === batch.events[i].node && (r.seq === null ? null : Number(r.seq)) === batch.events[i].seq);
    if (!same) {
      // Not ours (rows another writer left, e.g. a runtime that crashed mid-commit): look after them next time.
      if (after.length) this.lastId = after[after.length - 1].id;
      return null;
    }
    const sessionIds = new Map<number, number>();
    batch.events.forEach((event, i) => {
      if (event.session && "temp" in event.session && rows[i].session_id !== null) sessionIds.set(event.session.temp, rows[i].session_id);
    });
    const result = { eventIds: rows.map((r) => r.id), sessionIds };
    this.noteIds(result);
    this.logger.warn({ layoutId: this.layoutId, events: rows.length }, "a commit whose reply was lost had gone through: not stored again");
    return result;
  }

  /** Bad data: the batch with safe text; failing that, its parts one by one. */
  private async commitPoisoned(batch: Batch, cause: Error): Promise<CommitResult> {
    this.logger.warn({ err: cause, layoutId: this.layoutId }, "a batch was refused for its data: storing it with safe text");
    const safe: Batch = { ...batch, events: batch.events.map(safeEvent), audits: batch.audits.map((a) => safeValue(a) as typeof a) };
    try {
      const result = await commitBatch(this.pool, safe);
      this.noteIds(result);
      return result;
    } catch (err) {
      if (!isDataError(err)) throw err;
    }
    // One by one: sessions and audits first, then each event, then the snapshot (it must follow the events).
    const head = { ...emptyBatch(batch.layoutId), sessionOpens: batch.sessionOpens, sessionCloses: batch.sessionCloses, audits: safe.audits };
    let sessionIds = new Map<number, number>();
    try {
      sessionIds = (await commitBatch(this.pool, head)).sessionIds;
    } catch (err) {
      if (!isDataError(err)) throw err;
      this.logger.error({ err, layoutId: this.layoutId }, "sessions and audit entries of a batch could not be stored");
    }
    const resolveRef = (ref: SessionRef | null): SessionRef | null =>
      ref && "temp" in ref ? (sessionIds.has(ref.temp) ? { id: sessionIds.get(ref.temp)! } : null) : ref;
    const resolve = (e: PendingEvent): PendingEvent => (e.session && "temp" in e.session ? { ...e, session: resolveRef(e.session) } : e);
    const eventIds: string[] = [];
    for (const event of safe.events) {
      const one = { ...emptyBatch(batch.layoutId), events: [resolve(event)] };
      try {
        eventIds.push(...(await commitBatch(this.pool, one)).eventIds);
      } catch (err) {
        if (!isDataError(err)) throw err;
        const reason = `could not be stored as received (${(err as { code?: string }).code}: ${(err as Error).message.slice(0, 200)})`;
        this.logger.warn({ err, layoutId: this.layoutId }, "one event refused for its data: stored alone as rejected");
        const rejected: PendingEvent = { ...resolve(event), status: "rejected", reason, boot: null, detector: null, topic: null, rawPayload: null, input: null, changes: [] };
        eventIds.push(...(await commitBatch(this.pool, { ...emptyBatch(batch.layoutId), events: [rejected] })).eventIds);
      }
    }
    if (batch.snapshot || batch.aspectRev !== null) {
      const snapshot = batch.snapshot && { ...batch.snapshot, session: resolveRef(batch.snapshot.session) };
      await commitBatch(this.pool, { ...emptyBatch(batch.layoutId), snapshot, aspectRev: batch.aspectRev });
    }
    const result = { eventIds, sessionIds };
    this.noteIds(result);
    return result;
  }
}
