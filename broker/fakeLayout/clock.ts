/**
 * Time for the fake layout, injected so the player can run without real time in tests.
 * All times are scenario milliseconds; `speed` only decides how fast they pass on the wall.
 */

export type Cancel = () => void;

export interface Scheduler {
  /** Scenario milliseconds since the scheduler started. */
  now(): number;
  /** Runs `fn` once, `ms` scenario milliseconds from now. */
  after(ms: number, fn: () => void): Cancel;
}

/**
 * Real time, `speed` times faster (speed 10: one wall second is ten scenario seconds).
 * When a timer fires late (a busy machine, a garbage collection), scenario time slips by the
 * delay instead of jumping: the trains pause rather than firing a burst of pulses at once,
 * which the server would rightly take for a chattering detector.
 */
export function realScheduler(speed = 1): Scheduler {
  let origin = performance.now();
  const now = () => (performance.now() - origin) * speed;
  return {
    now,
    after(ms, fn) {
      const due = now() + Math.max(0, ms);
      const timer = setTimeout(() => {
        const late = now() - due;
        if (late > 0) origin += late / speed;
        fn();
      }, Math.max(0, ms / speed));
      return () => clearTimeout(timer);
    },
  };
}

/** A scheduler that moves only when told to: `advanceBy` runs due timers in time order. */
export class ManualScheduler implements Scheduler {
  private time = 0;
  private nextId = 0;
  private timers: { id: number; due: number; fn: () => void }[] = [];

  now(): number {
    return this.time;
  }

  after(ms: number, fn: () => void): Cancel {
    const id = this.nextId++;
    this.timers.push({ id, due: this.time + Math.max(0, ms), fn });
    return () => {
      this.timers = this.timers.filter((t) => t.id !== id);
    };
  }

  /** Moves time forward, running every timer that falls due on the way, earliest first. */
  advanceBy(ms: number): void {
    const target = this.time + ms;
    for (;;) {
      const due = this.timers.filter((t) => t.due <= target).sort((a, b) => a.due - b.due || a.id - b.id)[0];
      if (!due) break;
      this.timers = this.timers.filter((t) => t !== due);
      this.time = Math.max(this.time, due.due);
      due.fn();
    }
    this.time = target;
  }

  get pending(): number {
    return this.timers.length;
  }

  /** When the earliest timer falls due (null: none is set). */
  get nextDue(): number | null {
    return this.timers.length ? Math.min(...this.timers.map((t) => t.due)) : null;
  }
}
