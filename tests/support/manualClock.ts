/**
 * A clock for the server's own timers (server/clock.ts) that moves only when a test says so:
 * quiet triggers, session idle, the reorder wait, the watchdog and the alarm watchers' deadlines
 * fire on `advance`, not after real waiting. Real I/O (commits, MQTT) still takes real time,
 * so `advance` stops at every timer that falls due and lets `settle` finish what it started
 * (a commit, a push) before time moves on: the runner sees time pass as it would, in order.
 */
import { ManualScheduler } from "../../broker/fakeLayout/clock";
import type { Cancel, Clock } from "../../server/clock";

/** Timers set by a timer that fire at once again, more than this often, are a loop, not a test. */
const MAX_TIMERS_PER_ADVANCE = 100_000;

export class ManualClock implements Clock {
  private readonly scheduler = new ManualScheduler();

  /** Starts at the real time (stored timestamps look like today's), then stands still. */
  constructor(private readonly epoch = Date.now()) {}

  // Own properties, not prototype methods: runner options spread or pick them (`{ ...clock }`).
  readonly now = (): number => this.epoch + this.scheduler.now();

  readonly after = (ms: number, fn: () => void): Cancel => this.scheduler.after(ms, fn);

  /** Moves time `ms` forward, one due timer at a time, awaiting `settle` after each. */
  async advance(ms: number, settle: () => Promise<void> = async () => {}): Promise<void> {
    const target = this.scheduler.now() + ms;
    for (let fired = 0; ; fired++) {
      const due = this.scheduler.nextDue;
      if (due === null || due > target) break;
      if (fired > MAX_TIMERS_PER_ADVANCE) throw new Error(`more than ${MAX_TIMERS_PER_ADVANCE} timers fell due within ${ms} ms: a timer loop`);
      this.scheduler.advanceBy(due - this.scheduler.now());
      await settle();
    }
    this.scheduler.advanceBy(target - this.scheduler.now());
    await settle();
  }
}
