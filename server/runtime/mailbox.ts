/**
 * The runner's queue of inputs (STYLE.md: a small queue class of its own): enqueue, take a
 * batch, clear. Items are taken in arrival order; an item marked `alone` is a batch by itself.
 */
export class Mailbox<T> {
  private items: T[] = [];
  private head = 0;

  get size(): number {
    return this.items.length - this.head;
  }

  enqueue(item: T): void {
    this.items.push(item);
  }

  /** Up to `max` items; one that `alone` says must stand by itself ends the batch (or is it). */
  take(max: number, alone: (item: T) => boolean): T[] {
    const out: T[] = [];
    while (this.head < this.items.length && out.length < max) {
      const item = this.items[this.head];
      if (alone(item) && out.length > 0) break;
      out.push(item);
      this.head++;
      if (alone(item)) break;
    }
    // Drop the consumed prefix now and then, so a long run does not keep every item alive.
    if (this.head > 1024 && this.head * 2 > this.items.length) {
      this.items = this.items.slice(this.head);
      this.head = 0;
    }
    return out;
  }

  clear(): void {
    this.items = [];
    this.head = 0;
  }
}
