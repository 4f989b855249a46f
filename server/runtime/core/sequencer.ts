/**
 * Strict seq order per (node, boot) with a bounded wait for missing seqs (CONTRACT.md §2).
 *
 * A boot's messages are released in seq order. One that arrives ahead of a missing seq waits
 * until the missing ones come (the board resends them after a reconnect) or until it has
 * waited `reorderWaitMs`, or until a newer boot of that node appears; then the missing seqs
 * are declared missed and the waiting ones released. A message for a seq below the boot's
 * position is a duplicate (that seq is stored already) or late (that seq was declared missed).
 * Boards are independent: one board's gap holds up no other board.
 *
 * Pure: no clock, no I/O. The tracker is owned by the caller and updated in place (the
 * waiting buffer can hold thousands of messages; copying it per message would be quadratic).
 */

/** Boots remembered per node (the current one and a few before it, for late deliveries). */
export const BOOTS_KEPT_PER_NODE = 4;
/** Declared-missed ranges remembered per boot; older ones read as duplicates. */
export const MISSED_RANGES_KEPT = 1_000;
/** Most messages waiting per boot; beyond it the oldest gap is declared missed at once. */
export const MAX_WAITING_PER_BOOT = 20_000;

export interface Waiting<T> {
  message: T;
  arrivedAt: number;
}

export interface BootTrack<T> {
  node: string;
  boot: string;
  /** The lowest seq neither stored nor declared missed. */
  next: number;
  waiting: Map<number, Waiting<T>>;
  /** Declared-missed seqs as inclusive [from, to] ranges, ascending. */
  missed: [number, number][];
  /** Set when a newer boot of the node appeared: everything for it from then on is late. */
  ended: boolean;
}

export interface SeqTracker<T> {
  boots: Map<string, BootTrack<T>>;
  /** node → its boots, newest last. */
  nodeBoots: Map<string, string[]>;
}

/** What to do with one message, in the order to do it. */
export type SeqDecision<T> =
  | { type: "release"; message: T; node: string; boot: string; seq: number }
  | { type: "duplicate"; message: T; node: string; boot: string; seq: number }
  | { type: "late"; message: T; node: string; boot: string; seq: number; why: string }
  | { type: "wait"; node: string; boot: string; seq: number }
  | { type: "missed"; node: string; boot: string; from: number; to: number; why: "timeout" | "new-boot" | "buffer-full" };

export function emptyTracker<T>(): SeqTracker<T> {
  return { boots: new Map(), nodeBoots: new Map() };
}

const key = (node: string, boot: string) => `${node}\u0000${boot}`;

/** Puts a boot known from the log back (recovery): its position and its declared gaps. */
export function restoreBoot<T>(tracker: SeqTracker<T>, node: string, boot: string, next: number, missed: [number, number][], ended: boolean): void {
  const track: BootTrack<T> = { node, boot, next, waiting: new Map(), missed: missed.slice(-MISSED_RANGES_KEPT), ended };
  tracker.boots.set(key(node, boot), track);
  const list = tracker.nodeBoots.get(node) ?? [];
  list.push(boot);
  tracker.nodeBoots.set(node, list);
}

function isMissed(track: BootTrack<unknown>, seq: number): boolean {
  return track.missed.some(([from, to]) => seq >= from && seq <= to);
}

function declare<T>(track: BootTrack<T>, to: number, why: "timeout" | "new-boot" | "buffer-full", out: SeqDecision<T>[]): void {
  if (to < track.next) return;
  track.missed.push([track.next, to]);
  if (track.missed.length > MISSED_RANGES_KEPT) track.missed.shift();
  out.push({ type: "missed", node: track.node, boot: track.boot, from: track.next, to, why });
  track.next = to + 1;
}

function releaseRun<T>(track: BootTrack<T>, out: SeqDecision<T>[]): void {
  for (;;) {
    const w = track.waiting.get(track.next);
    if (!w) return;
    track.waiting.delete(track.next);
    out.push({ type: "release", message: w.message, node: track.node, boot: track.boot, seq: track.next });
    track.next++;
  }
}

/** Declares every gap of a boot missed and releases all that waits (timeout or new boot). */
function flush<T>(track: BootTrack<T>, why: "timeout" | "new-boot", out: SeqDecision<T>[]): void {
  while (track.waiting.size > 0) {
    const lowest = Math.min(...track.waiting.keys());
    declare(track, lowest - 1, why, out);
    releaseRun(track, out);
  }
}

function startBoot<T>(tracker: SeqTracker<T>, node: string, boot: string, out: SeqDecision<T>[]): BootTrack<T> {
  const list = tracker.nodeBoots.get(node) ?? [];
  for (const older of list) {
    const track = tracker.boots.get(key(node, older))!;
    if (!track.ended) {
      flush(track, "new-boot", out);
      track.ended = true;
    }
  }
  const track: BootTrack<T> = { node, boot, next: 1, waiting: new Map(), missed: [], ended: false };
  tracker.boots.set(key(node, boot), track);
  list.push(boot);
  while (list.length > BOOTS_KEPT_PER_NODE) tracker.boots.delete(key(node, list.shift()!));
  tracker.nodeBoots.set(node, list);
  return track;
}

/**
 * One numbered message of (node, boot, seq) arriving at `at`. Returns the decisions in order:
 * declared gaps first, then the messages released by this one (possibly none: it waits).
 */
export function offer<T>(tracker: SeqTracker<T>, node: string, boot: string, seq: number, message: T, at: number): SeqDecision<T>[] {
  const out: SeqDecision<T>[] = [];
  const track = tracker.boots.get(key(node, boot)) ?? startBoot(tracker, node, boot, out);
  if (seq < track.next) {
    if (isMissed(track, seq)) out.push({ type: "late", message, node, boot, seq, why: `seq ${seq} of boot ${boot} was declared missed before it arrived` });
    else out.push({ type: "duplicate", message, node, boot, seq });
    return out;
  }
  if (track.ended) {
    out.push({ type: "late", message, node, boot, seq, why: `boot ${boot} of node "${node}" had ended (a newer boot appeared) before seq ${seq} arrived` });
    return out;
  }
  if (track.waiting.has(seq)) {
    out.push({ type: "duplicate", message, node, boot, seq });
    return out;
  }
  if (seq === track.next) {
    out.push({ type: "release", message, node, boot, seq });
    track.next++;
    releaseRun(track, out);
    return out;
  }
  track.waiting.set(seq, { message, arrivedAt: at });
  out.push({ type: "wait", node, boot, seq });
  if (track.waiting.size > MAX_WAITING_PER_BOOT) {
    const lowest = Math.min(...track.waiting.keys());
    declare(track, lowest - 1, "buffer-full", out);
    releaseRun(track, out);
  }
  return out;
}

/** The earliest moment a waiting message runs out of patience, or null when none waits. */
export function nextExpiry(tracker: SeqTracker<unknown>, reorderWaitMs: number): number | null {
  let earliest: number | null = null;
  for (const track of tracker.boots.values()) {
    for (const w of track.waiting.values()) {
      const due = w.arrivedAt + reorderWaitMs;
      if (earliest === null || due < earliest) earliest = due;
    }
  }
  return earliest;
}

/**
 * At `at`: for every boot whose oldest waiting message has waited `reorderWaitMs`, the gap
 * before it is declared missed and what follows is released; the next gap gets the same
 * treatment if its first waiting message has waited as long.
 */
export function expire<T>(tracker: SeqTracker<T>, at: number, reorderWaitMs: number): SeqDecision<T>[] {
  const out: SeqDecision<T>[] = [];
  for (const track of tracker.boots.values()) {
    while (track.waiting.size > 0) {
      const lowest = Math.min(...track.waiting.keys());
      if (track.waiting.get(lowest)!.arrivedAt + reorderWaitMs > at) break;
      declare(track, lowest - 1, "timeout", out);
      releaseRun(track, out);
    }
  }
  return out;
}

/** The highest seq of a boot that is stored or declared missed (what `applied` may confirm). */
export function covered(tracker: SeqTracker<unknown>, node: string, boot: string): number {
  const track = tracker.boots.get(key(node, boot));
  return track ? track.next - 1 : 0;
}

/** The current (newest, not ended) boot of every node, with its coverage. */
export function currentBoots(tracker: SeqTracker<unknown>): { node: string; boot: string; seq: number }[] {
  const out: { node: string; boot: string; seq: number }[] = [];
  for (const [node, boots] of tracker.nodeBoots) {
    const boot = boots[boots.length - 1];
    const track = tracker.boots.get(key(node, boot));
    if (track && !track.ended) out.push({ node, boot, seq: track.next - 1 });
  }
  return out;
}

/** Messages waiting for a missing seq, over all boots. */
export function waitingCount(tracker: SeqTracker<unknown>): number {
  let n = 0;
  for (const track of tracker.boots.values()) n += track.waiting.size;
  return n;
}

/** Does a message this far ahead of its boot's position deserve a wait? (MAX_SEQ_AHEAD) */
export function tooFarAhead(tracker: SeqTracker<unknown>, node: string, boot: string, seq: number, maxAhead: number): boolean {
  const track = tracker.boots.get(key(node, boot));
  return seq - (track ? track.next : 1) > maxAhead;
}
