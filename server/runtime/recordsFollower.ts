/**
 * Keeps a running layout in step with its records (lines, detectors, signals, points, nodes)
 * when the workbench saves them or a board is registered, without a restart: on
 * `layout.records-changed` or `layout.nodes-changed` the records are read again and handed to
 * the runner between two batches (never inside one, so no pulse is lost, duplicated or applied
 * against half-old records). From the announcement until the adoption, a board message that
 * only the new records can make right waits for them (recordsHold.ts) instead of being
 * rejected against the old ones.
 *
 * Signals: the boards must hear of every signal the layout has, not only the ones the live
 * rulebook mentions. A signal in the records that the runner has never commanded gets a
 * retained aspect of danger at once (the rulebook clears it when a version that uses it is
 * published); a signal no longer in the records nor in the rulebook has its retained aspect
 * cleared on the broker (an empty retained message), so no board that starts later is told
 * about a signal that no longer exists. The same reconciliation runs when a runner starts.
 */
import type pg from "pg";
import { signalIds } from "@shared/rulebook/engine";
import type { Bus } from "../bus";
import type { Logger } from "../logger";
import { poolQuery, type Query } from "./eventLog";
import { revReservation, type Core } from "./core/state";
import type { NodeEntry } from "./ingest";
import type { LayoutLink } from "./layoutLink";
import { loadNodes } from "./recovery";

/** What the runner takes from the records: its boards (for ingest) and its signals. */
export interface LiveRecords {
  nodes: Map<string, NodeEntry>;
  signals: string[];
}

/** The part of a runner this module needs (LayoutRunner implements it). */
export interface RecordsTarget {
  readonly layoutId: number;
  readonly slug: string;
  betweenBatches(change: (core: Core, link: LayoutLink | null) => void): Promise<void>;
  /** A change was announced; the returned function says it is adopted or given up. */
  expectRecords(): () => void;
}

export async function loadLiveRecords(query: Query, layoutId: number): Promise<LiveRecords> {
  const [nodes, signals] = await Promise.all([
    loadNodes(query, layoutId),
    query<{ signal_id: string }>(`SELECT signal_id FROM signals WHERE layout_id = $1 ORDER BY position`, [layoutId]),
  ]);
  return { nodes, signals: signals.map((s) => s.signal_id) };
}

/**
 * Applies `records` to `core` (pure but for the returned commands): the new directory of
 * boards, a danger command for each signal never commanded, and the signals to clear.
 */
export function adoptRecords(core: Core, records: LiveRecords): { commands: { signal: string; rev: number }[]; cleared: string[] } {
  core.nodes = records.nodes;
  const inRulebook = new Set(signalIds(core.rulebook));
  const known = new Set([...inRulebook, ...records.signals]);
  const commands: { signal: string; rev: number }[] = [];
  for (const signal of records.signals) {
    if (core.published.has(signal) || inRulebook.has(signal)) continue; // the rulebook's signals are commanded by the runner
    const rev = ++core.aspectRev;
    core.published.set(signal, { aspect: "danger", rev });
    commands.push({ signal, rev });
  }
  const cleared = [...core.published.keys()].filter((signal) => !known.has(signal));
  for (const signal of cleared) core.published.delete(signal);
  return { commands, cleared };
}

/**
 * Reads the records and applies them to `runner` between batches; publishes what changed.
 * `adopted` runs as soon as the runner has them (the messages waiting for them go on at once).
 */
export async function syncRecords(pool: pg.Pool, runner: RecordsTarget, now: () => number, adopted: () => void = () => {}): Promise<void> {
  const records = await loadLiveRecords(poolQuery(pool), runner.layoutId);
  let reservation: number | null = null;
  await runner.betweenBatches((core, link) => {
    const { commands, cleared } = adoptRecords(core, records);
    const at = now();
    for (const { signal, rev } of commands) link?.publishAspect(signal, "danger", rev, at);
    for (const signal of cleared) link?.clearAspect(signal);
    if (commands.length > 0) reservation = revReservation(core);
    adopted();
  });
  // Those revs are new: keep the stored reservation ahead of them (a restart never reuses a rev).
  if (reservation !== null) await pool.query(`UPDATE layouts SET aspect_rev = GREATEST(aspect_rev, $2) WHERE id = $1`, [runner.layoutId, reservation]);
}

/**
 * Listens for saved records and registered boards and syncs the running layout they belong
 * to. Syncs of one layout run one after another, so two quick saves can never apply in the
 * wrong order. The runner hears of each change when it is announced, not when its turn comes
 * (`expectRecords`), and of its end however it ends. Returns the function that stops listening.
 */
export function followRecords(options: { bus: Bus; logger: Logger; pool: pg.Pool; now: () => number; runnerOf(layoutId: number): RecordsTarget | undefined }): () => void {
  const chains = new Map<number, Promise<void>>();
  const onChanged = ({ layoutId, slug }: { layoutId: number; slug: string }) => {
    const announced = options.runnerOf(layoutId);
    const adopted = announced?.expectRecords() ?? (() => {});
    const previous = chains.get(layoutId) ?? Promise.resolve();
    const next = previous
      .then(async () => {
        const runner = options.runnerOf(layoutId);
        if (runner) await syncRecords(options.pool, runner, options.now, runner === announced ? adopted : undefined);
      })
      .finally(adopted);
    const tail = next.catch((err: unknown) => options.logger.error({ err, slug }, "could not reload the records of a running layout"));
    chains.set(layoutId, tail);
    void tail.then(() => {
      if (chains.get(layoutId) === tail) chains.delete(layoutId);
    });
  };
  options.bus.on("layout.records-changed", onChanged, "live-records");
  options.bus.on("layout.nodes-changed", onChanged, "live-records");
  return () => {
    options.bus.off("layout.records-changed", onChanged);
    options.bus.off("layout.nodes-changed", onChanged);
  };
}
