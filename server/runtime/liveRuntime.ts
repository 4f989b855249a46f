/**
 * The live pipeline of the whole server: for every layout with a live rulebook, one runner
 * and its own MQTT client (`blocklight-server.{layout}`, layoutLink.ts), and the bus
 * listeners that switch rulebooks, follow saved records and boards (recordsFollower.ts) and
 * stop archived layouts.
 */
import pg from "pg";
import type { CommandBody, LiveState } from "@shared/contract/live";
import { signalIds } from "@shared/rulebook/engine";
import type { Rulebook } from "@shared/rulebook/schema";
import type { Database } from "../db/database";
import { connectLayoutLink } from "./layoutLink";
import { LiveError, type RuntimeDeps } from "./ports";
import { followRecords, syncRecords } from "./recordsFollower";
import { DEFAULT_RUNNER_OPTIONS, LayoutRunner, type CommandUser, type LayoutHealth, type RunnerOptions } from "./runner";

/** A statement the database has not finished in this long is cancelled by the server. */
export const STATEMENT_TIMEOUT_MS = 4_000;
/** A query with no reply in this long fails on our side (a frozen server never cancels anything). */
export const QUERY_TIMEOUT_MS = 6_000;
const CONNECT_TIMEOUT_MS = 3_000;

export interface LiveRuntimeOptions {
  deps: RuntimeDeps;
  /** The app's database, to make the runtime's own pool from (unless `pool` is given). */
  db: Database;
  mqtt: { url: string; username: string; password: string };
  pool?: pg.Pool;
  runner?: Partial<RunnerOptions>;
}

export interface LiveRuntime {
  connected(): boolean;
  /** Board messages received but not yet acknowledged to the broker (not yet committed). */
  pendingAcks(): number;
  runner(slug: string): LayoutRunner | undefined;
  /** Whether the layout has a runner (what features ask; `runner` is for the server and tests). */
  runs(slug: string): boolean;
  /** Each running layout: live, fail-safe (signals at danger) or stalled. */
  health(): Record<string, LayoutHealth>;
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

/**
 * A pg pool on the same database as the app's Sequelize instance, with timeouts on both
 * sides so no query can hang the live pipeline (the watchdog covers the time until they fire).
 */
export function poolFromDeps(deps: { db: Database }, max = 4): pg.Pool {
  const c = deps.db.sequelize.config;
  return new pg.Pool({
    host: c.host,
    port: Number(c.port),
    database: c.database,
    user: c.username,
    password: c.password ?? undefined,
    max,
    statement_timeout: STATEMENT_TIMEOUT_MS,
    query_timeout: QUERY_TIMEOUT_MS,
    idle_in_transaction_session_timeout: QUERY_TIMEOUT_MS,
    connectionTimeoutMillis: CONNECT_TIMEOUT_MS,
  });
}

export async function startLiveRuntime(options: LiveRuntimeOptions): Promise<LiveRuntime> {
  const { deps } = options;
  const ownPool = !options.pool;
  const pool = options.pool ?? poolFromDeps(options);
  // A connection the server ended (e.g. during an outage) must not crash the process.
  pool.on("error", (err) => deps.logger.warn({ err }, "live pipeline database connection lost"));
  const runnerOptions: RunnerOptions = { ...DEFAULT_RUNNER_OPTIONS, ...options.runner };
  const runners = new Map<string, LayoutRunner>();
  const byId = new Map<number, LayoutRunner>();

  const startRunner = async (layout: { id: number; slug: string }) => {
    const runner = new LayoutRunner(deps, pool, layout, runnerOptions);
    // Messages that arrive before recovery has finished wait here, in order.
    let ready = false;
    const early: (() => void)[] = [];
    const link = connectLayoutLink({
      ...options.mqtt,
      slug: layout.slug,
      logger: deps.logger,
      now: runnerOptions.now,
      onMessage(packet, payload, ack, receivedAt) {
        const deliver = () => runner.message({ topic: packet.topic, payload, retain: packet.retain, receivedAt, ack });
        if (ready) deliver();
        else early.push(deliver);
      },
      onConnect: () => runner.onConnect(),
    });
    await runner.start(link);
    ready = true;
    for (const deliver of early.splice(0)) deliver();
    runners.set(layout.slug, runner);
    byId.set(layout.id, runner);
    // Signals the rulebook does not mention still get their danger (recordsFollower.ts).
    await syncRecords(pool, runner, runnerOptions.now).catch((err) => deps.logger.error({ err, slug: layout.slug }, "could not read the records of a starting layout"));
    return runner;
  };

  const { rows } = await pool.query<{ id: number; slug: string }>(`SELECT id, slug FROM layouts WHERE live_version IS NOT NULL AND archived_at IS NULL ORDER BY id`);
  for (const layout of rows) await startRunner(layout);

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
  deps.bus.on("layout.archived", onArchived);
  deps.bus.on("layout.restored", onRestored);
  const unfollowRecords = followRecords({ bus: deps.bus, logger: deps.logger, pool, now: runnerOptions.now, runnerOf: (id) => byId.get(id) });

  const need = (slug: string) => {
    const runner = runners.get(slug);
    if (!runner) throw new LiveError(404, "not_found", `live layout "${slug}" not found`);
    return runner;
  };
  const detach = () => {
    deps.bus.off("rulebook.published", onPublished);
    deps.bus.off("layout.archived", onArchived);
    deps.bus.off("layout.restored", onRestored);
    unfollowRecords();
  };
  const links = () => [...runners.values()];

  return {
    connected: () => links().every((r) => r.linkConnected()),
    pendingAcks: () => links().reduce((n, r) => n + r.pendingAcks(), 0),
    runner: (slug) => runners.get(slug),
    runs: (slug) => runners.has(slug),
    health: () => Object.fromEntries([...runners].map(([slug, r]) => [slug, r.health()])),
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
      if (unknown) throw new LiveError(400, "invalid_input", "the command names something the live rulebook does not have", [unknown]);
      try {
        await runner.command(body, user);
      } catch (err) {
        throw new LiveError(409, "conflict", (err as Error).message);
      }
      return runner.liveState();
    },
    async session(slug, action, user) {
      const runner = need(slug);
      await runner.sessionControl(action, user);
      return runner.liveState();
    },
    async idle() {
      await Promise.all(links().map((r) => r.idle()));
    },
    async stop() {
      detach();
      for (const runner of links()) await runner.stop();
      if (ownPool) await pool.end();
    },
    async crash() {
      detach();
      for (const runner of links()) runner.abandon();
      if (ownPool) await pool.end().catch(() => {});
    },
  };
}
