/**
 * One durable commit (a one-row INSERT, so one WAL flush) timed `samples` times on the
 * bench's database: the floor under every pulse → aspect figure, measured in the same run.
 */
import type pg from "pg";

export async function durableCommitTimes(db: pg.Client | pg.Pool, samples: number): Promise<number[]> {
  await db.query(`CREATE TABLE IF NOT EXISTS bench_commit (id serial PRIMARY KEY, at timestamptz NOT NULL DEFAULT now())`);
  const times: number[] = [];
  for (let i = 0; i < samples; i++) {
    const started = performance.now();
    await db.query(`INSERT INTO bench_commit DEFAULT VALUES`);
    times.push(performance.now() - started);
  }
  return times;
}
