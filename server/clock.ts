/**
 * Time for the server's own timers: the live runner's clock (quiet triggers, session idle,
 * the reorder wait, points detection) and its watchdog, and the alarm watchers' "nothing
 * happened for N" deadlines. It is passed in, so a test moves it by hand (tests/support/
 * manualClock.ts) instead of waiting on real time. Timeouts that guard real I/O (a query, the
 * broker, a retry back-off) stay on real time: a test cannot fast-forward the outside world.
 */

/** Cancels a timer of `Clock.after`; harmless once it has run. */
export type Cancel = () => void;

export interface Clock {
  /** Milliseconds since the epoch. */
  now(): number;
  /** Runs `fn` once, `ms` from now. Never keeps the process alive on its own. */
  after(ms: number, fn: () => void): Cancel;
}

export const systemClock: Clock = {
  now: () => Date.now(),
  after(ms, fn) {
    const timer = setTimeout(fn, Math.max(0, ms));
    timer.unref?.();
    return () => clearTimeout(timer);
  },
};
