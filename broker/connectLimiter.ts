/**
 * Connect attempts per remote address, as a token bucket: a burst of `burst` attempts, then
 * `perSecond` more each second. Checked before any database look-up or hash work, so a storm
 * of bad passwords costs the broker's one thread almost nothing. A successful login gives its
 * token back, so boards reconnecting after a power cut are not held up by their neighbours.
 */
export interface ConnectLimits {
  burst: number;
  perSecond: number;
}

/** Generous for a club's boards behind one address; a password storm runs dry within a second. */
export const DEFAULT_CONNECT_LIMITS: ConnectLimits = { burst: 60, perSecond: 20 };
/** Buckets idle this long are full again and are forgotten, so the map stays small. */
const FORGET_AFTER_MS = 60_000;

interface Bucket {
  tokens: number;
  at: number;
}

export class ConnectLimiter {
  private readonly buckets = new Map<string, Bucket>();
  private lastSweep = 0;

  constructor(
    private readonly limits: ConnectLimits = DEFAULT_CONNECT_LIMITS,
    private readonly now: () => number = Date.now,
  ) {}

  /** Takes a token for `address`; false when there is none left. */
  take(address: string): boolean {
    const at = this.now();
    this.sweep(at);
    const bucket = this.buckets.get(address) ?? { tokens: this.limits.burst, at };
    bucket.tokens = Math.min(this.limits.burst, bucket.tokens + ((at - bucket.at) / 1000) * this.limits.perSecond);
    bucket.at = at;
    this.buckets.set(address, bucket);
    if (bucket.tokens < 1) return false;
    bucket.tokens -= 1;
    return true;
  }

  /** Gives back the token of an attempt that succeeded. */
  refund(address: string): void {
    const bucket = this.buckets.get(address);
    if (bucket) bucket.tokens = Math.min(this.limits.burst, bucket.tokens + 1);
  }

  private sweep(at: number): void {
    if (at - this.lastSweep < FORGET_AFTER_MS) return;
    this.lastSweep = at;
    for (const [address, bucket] of this.buckets) if (at - bucket.at > FORGET_AFTER_MS) this.buckets.delete(address);
  }
}
