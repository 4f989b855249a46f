/**
 * Board messages that only the records being saved can make right wait for them, so a real
 * pulse is never stored as rejected against records that were already replaced (CONTRACT.md
 * §2: nothing acknowledged is lost; a rejection states a true reason).
 *
 * Between a save being announced (`layout.records-changed` or `layout.nodes-changed`) and the
 * runner adopting the records read again (recordsFollower.ts), ingest still judges against
 * the old directory of boards. A message refused only by that directory (an unknown node; a
 * detector, points or signal the node does not serve) while a change is expected starts a hold
 * of its board: it and every later message of that board wait here, in arrival order, so its
 * seq order is kept. After each adoption they are judged again; one still wrong while another
 * change is expected waits on. No message waits longer than `RECORDS_WAIT_MS` after it arrived
 * (on the runner's clock): then its board's messages are judged against what is adopted.
 * Other boards are not held up, and with no change expected nothing waits at all.
 *
 * A held message is not yet acknowledged: its PUBACK and `applied` wait for its commit like
 * any other's, so a stop drops nothing the board or broker would not send again.
 */
import type { Cancel, Clock } from "../clock";

/** The longest a board's message waits for records being saved (a reload takes milliseconds). */
export const RECORDS_WAIT_MS = 3_000;

export interface RecordsHoldParts<T> {
  clock: Clock;
  waitMs: number;
  /** Messages whose wait is over, in their board's order; `final`: judge them against what is adopted now. */
  release(items: T[], final: boolean): void;
}

export class RecordsHold<T extends { receivedAt: number }> {
  /** Changes announced and not yet adopted (or given up). */
  private expected = 0;
  /** Per board: its waiting messages, oldest first, and the timer of the first one's bound. */
  private readonly boards = new Map<string, { items: T[]; cancel: Cancel }>();

  constructor(private readonly parts: RecordsHoldParts<T>) {}

  /** A change of the records was announced. Call the returned function once it is adopted or given up (again: no effect). */
  expect(): () => void {
    this.expected++;
    let done = false;
    return () => {
      if (done) return;
      done = true;
      this.expected--;
      this.judgeAgain();
    };
  }

  /** Must this message of `node` wait? Yes behind its board's waiting ones, or when only the directory refuses it while a change is expected. */
  mustWait(node: string, refusedByDirectory: boolean): boolean {
    return this.boards.has(node) || (refusedByDirectory && this.expected > 0);
  }

  add(node: string, item: T): void {
    let board = this.boards.get(node);
    if (!board) {
      const due = item.receivedAt + this.parts.waitMs - this.parts.clock.now();
      board = { items: [], cancel: this.parts.clock.after(Math.max(0, due), () => this.expire(node)) };
      this.boards.set(node, board);
    }
    board.items.push(item);
  }

  /** Changes announced and not yet adopted or given up. */
  get changesExpected(): number {
    return this.expected;
  }

  /** Messages waiting, over all boards. */
  get size(): number {
    let n = 0;
    for (const board of this.boards.values()) n += board.items.length;
    return n;
  }

  /** Drops everything (the runner stops): none of it was acknowledged, so it comes again. */
  clear(): void {
    for (const board of this.boards.values()) board.cancel();
    this.boards.clear();
  }

  private expire(node: string): void {
    const board = this.boards.get(node);
    if (!board) return;
    this.boards.delete(node);
    this.parts.release(board.items, true);
  }

  /** Records were adopted: every board's messages go back to be judged (and may start waiting again, keeping their first arrival's bound). */
  private judgeAgain(): void {
    const boards = [...this.boards.values()];
    this.boards.clear();
    for (const board of boards) {
      board.cancel();
      this.parts.release(board.items, false);
    }
  }
}
