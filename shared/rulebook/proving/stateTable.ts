/**
 * Storage of the search that does not grow the JavaScript heap per state: growable typed
 * vectors, and the table of distinct states — engine state id plus compact trains — found again
 * through an open-addressing hash table (linear probing) over typed arrays.
 */
import type { TrainCodec } from "./trainCodec";

/** A growable typed vector (the search's per-state and per-edge columns). */
export class Vec<A extends Int32Array | Uint16Array | Uint8Array> {
  data: A;
  length = 0;
  constructor(
    private readonly make: (n: number) => A,
    capacity = 1024,
  ) {
    this.data = make(capacity);
  }
  /** Bytes held (for the memory limit). */
  get bytes(): number {
    return this.data.byteLength;
  }
  push(v: number): void {
    if (this.length === this.data.length) this.reserve(this.length + 1);
    this.data[this.length++] = v;
  }
  /** Sets entry i, growing the vector (new entries 0) when i is past its end. */
  put(i: number, v: number): void {
    if (i >= this.data.length) this.reserve(i + 1);
    if (i >= this.length) this.length = i + 1;
    this.data[i] = v;
  }
  /** Clears the vector, keeping its storage. */
  clear(): void {
    this.length = 0;
  }
  private reserve(n: number): void {
    let size = this.data.length;
    while (size < n) size *= 2;
    const bigger = this.make(size);
    bigger.set(this.data.subarray(0, this.length));
    this.data = bigger;
  }
}

export class IntVec extends Vec<Int32Array> {
  constructor(capacity = 1024) {
    super((n) => new Int32Array(n), capacity);
  }
}

/** The smallest vector whose entries hold every value 0…max. */
export function vecFor(max: number, capacity = 1024): Vec<Int32Array> | Vec<Uint16Array> | Vec<Uint8Array> {
  if (max <= 0xff) return new Vec((n) => new Uint8Array(n), capacity);
  if (max <= 0xffff) return new Vec((n) => new Uint16Array(n), capacity);
  return new IntVec(capacity);
}

/**
 * Every distinct state: its engine state id and trains, found again through an open-addressing
 * hash table (linear probing). Trains are kept in the codec's compact form (trainCodec.ts), so a
 * state costs its engine id, a few words and its hash slots. Ids are handed out in order of
 * discovery.
 */
export class StateTable {
  /** 32-bit words of trains per state. */
  readonly words: number;
  trains: Int32Array;
  engine: Int32Array;
  size = 0;
  private slots: Int32Array;
  private mask: number;
  private readonly key: Int32Array;
  constructor(private readonly codec: TrainCodec) {
    this.words = codec.words;
    this.key = new Int32Array(this.words);
    this.trains = new Int32Array(this.words * 4096);
    this.engine = new Int32Array(4096);
    this.slots = new Int32Array(1 << 13).fill(-1);
    this.mask = this.slots.length - 1;
  }
  private hash(engine: number, words: Int32Array, at: number): number {
    let h = Math.imul(engine ^ 0x9e3779b9, 0x85ebca6b);
    for (let i = 0; i < this.words; i++) {
      h = Math.imul(h ^ words[at + i], 0xcc9e2d51);
      h = (h << 15) | (h >>> 17);
    }
    h = Math.imul(h ^ (h >>> 16), 0x85ebca6b);
    return (h ^ (h >>> 13)) >>> 0;
  }
  private equals(id: number, engine: number): boolean {
    if (this.engine[id] !== engine) return false;
    const off = id * this.words;
    for (let i = 0; i < this.words; i++) if (this.trains[off + i] !== this.key[i]) return false;
    return true;
  }
  /** The id of (engine, trains `v` in byte form), adding it if new (then `size` grows). */
  findOrAdd(engine: number, v: Uint8Array): number {
    this.codec.encode(v, this.key, 0);
    return this.findOrAddKey(engine);
  }

  /**
   * The same, for trains that differ from state `from`'s only in group `group` (-1: not at all):
   * only that group is encoded again.
   */
  findOrAddNear(engine: number, v: Uint8Array, from: number, group: number): number {
    this.key.set(this.trains.subarray(from * this.words, from * this.words + this.words));
    if (group >= 0) this.codec.encodeGroup(v, group, this.key, 0);
    return this.findOrAddKey(engine);
  }

  private findOrAddKey(engine: number): number {
    let i = this.hash(engine, this.key, 0) & this.mask;
    for (;;) {
      const id = this.slots[i];
      if (id < 0) break;
      if (this.equals(id, engine)) return id;
      i = (i + 1) & this.mask;
    }
    const id = this.size++;
    if (id >= this.engine.length) {
      const engines = new Int32Array(this.engine.length * 2);
      engines.set(this.engine);
      this.engine = engines;
      const trains = new Int32Array(this.trains.length * 2);
      trains.set(this.trains);
      this.trains = trains;
    }
    this.engine[id] = engine;
    this.trains.set(this.key, id * this.words);
    this.slots[i] = id;
    if (this.size * 2 > this.slots.length) this.grow();
    return id;
  }
  /** Writes the trains of state `id`, in byte form, to `v`. */
  load(id: number, v: Uint8Array): Uint8Array {
    this.codec.decode(this.trains, id * this.words, v);
    return v;
  }
  /** Bytes held by the table (for the memory limit). */
  get bytes(): number {
    return this.trains.byteLength + this.engine.byteLength + this.slots.byteLength;
  }
  private grow(): void {
    const slots = new Int32Array(this.slots.length * 2).fill(-1);
    const mask = slots.length - 1;
    for (let id = 0; id < this.size; id++) {
      let i = this.hash(this.engine[id], this.trains, id * this.words) & mask;
      while (slots[i] >= 0) i = (i + 1) & mask;
      slots[i] = id;
    }
    this.slots = slots;
    this.mask = mask;
  }
}
