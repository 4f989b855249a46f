/**
 * Holds back chosen queries of a real pg pool until the test lets them go, so a test can
 * catch the pipeline in the middle of a slow read (a reload of the records still in flight
 * when a board's message arrives) instead of hoping the timing falls that way. The queries
 * still run, on the real database, once the gate opens; everything else passes at once.
 */
import type pg from "pg";

export interface QueryGate {
  /** From now on, matching queries wait. */
  close(): void;
  /** Lets every waiting query go, and the next ones pass. */
  open(): void;
  /** Matching queries held back since the gate last closed. */
  readonly held: number;
}

export function gateQueries(pool: pg.Pool, matches: (sql: string) => boolean): QueryGate {
  const query = pool.query.bind(pool) as (...args: unknown[]) => Promise<unknown>;
  let gate: { opened: Promise<void>; open: () => void } | null = null;
  let held = 0;
  (pool as unknown as { query: (...args: unknown[]) => Promise<unknown> }).query = (...args: unknown[]) => {
    const first = args[0];
    const sql = typeof first === "string" ? first : ((first as { text?: string } | undefined)?.text ?? "");
    if (!gate || !matches(sql)) return query(...args);
    held++;
    return gate.opened.then(() => query(...args));
  };
  return {
    close() {
      if (gate) return;
      let open = () => {};
      const opened = new Promise<void>((resolve) => (open = resolve));
      gate = { opened, open };
      held = 0;
    },
    open() {
      gate?.open();
      gate = null;
    },
    get held() {
      return held;
    },
  };
}
