/**
 * The exact pulse → aspect measurement of the sustained bench: a probe board with one
 * detector whose two rules flip one signal on every pulse, one probe in flight at a time.
 * Each probe pulse makes exactly one new aspect command (a newer rev, the other aspect), so
 * its arrival at the probe board minus the pulse's send time is that pulse's pulse → aspect:
 * nothing is matched by guesswork.
 *
 * Each sample is also taken apart at the server's own stamps: the pulse's `received_at` in
 * the event log (board → server, including the server's event-loop lag), the command's `at`
 * (receipt → commit → publish) and the board's receipt (the broker hop out).
 */
import type { AspectPayload } from "@shared/contract/live";

export const PROBE_DETECTOR = "PR";
export const PROBE_SIGNAL = "PS";
const PROBE_LATCH = "probeLit";
/** At most one probe this often: a small share of the load, and wider than the chatter gap (40 ms). */
export const PROBE_EVERY_MS = 50;
/** A probe unanswered this long is counted lost and the next one goes. */
const PROBE_TIMEOUT_MS = 30_000;

/** The probe's declarations and rules, added to the bench layout. */
export function probeRulebookPart() {
  return {
    latches: { [PROBE_LATCH]: false },
    initial: { [PROBE_SIGNAL]: "danger" as const },
    rules: [
      { id: "probe-on", on: { pass: PROBE_DETECTOR }, if: { not: { latch: PROBE_LATCH } }, do: [{ set: PROBE_LATCH }, { show: PROBE_SIGNAL, aspect: "clear" }] },
      { id: "probe-off", on: { pass: PROBE_DETECTOR }, if: { latch: PROBE_LATCH }, do: [{ clear: PROBE_LATCH }, { show: PROBE_SIGNAL, aspect: "danger" }] },
    ],
  };
}

export interface ProbeSample {
  seq: number;
  /** performance.now() when the pulse was handed to the board. */
  sentAt: number;
  /** performance.now() when its aspect command reached the board. */
  receivedAt: number;
  /** The server's stamp on that command (`at`, wall-clock ms). */
  publishedAt: number;
}

export class AspectProbe {
  readonly samples: ProbeSample[] = [];
  lost = 0;
  private newest: AspectPayload | null = null;
  private inFlight: { seq: number; sentAt: number; want: string; afterRev: number } | null = null;
  private nextAt = 0;

  /** Wire into the probe board's `onAspect`. */
  readonly onAspect = (signal: string, payload: AspectPayload): void => {
    if (signal !== PROBE_SIGNAL) return;
    const now = performance.now();
    this.newest = payload;
    const f = this.inFlight;
    if (!f || payload.rev <= f.afterRev || payload.aspect !== f.want) return;
    this.samples.push({ seq: f.seq, sentAt: f.sentAt, receivedAt: now, publishedAt: Date.parse(payload.at) });
    this.inFlight = null;
    this.nextAt = now + PROBE_EVERY_MS;
  };

  /** Is it time for the next probe (none in flight, the gap passed)? A stuck one is given up. */
  due(now = performance.now()): boolean {
    if (this.inFlight && now - this.inFlight.sentAt > PROBE_TIMEOUT_MS) {
      this.lost++;
      this.inFlight = null;
    }
    return this.inFlight === null && now >= this.nextAt;
  }

  /** Call right after the probe pulse with seq `seq` went to the board at `sentAt`. */
  sent(seq: number, sentAt: number): void {
    // The rules flip the signal: the command this pulse causes is the other aspect, newer rev.
    this.inFlight = { seq, sentAt, want: this.newest?.aspect === "clear" ? "danger" : "clear", afterRev: this.newest?.rev ?? 0 };
  }

  /** Forget the samples of the last rate (an in-flight probe stays in flight). */
  reset(): void {
    this.samples.length = 0;
    this.lost = 0;
  }
}
