/**
 * Storage of the search that does not grow the JavaScript heap per state: growable typed
 * vectors, and the table of distinct states — engine state id plus packed trains — found again
 * through an open-addressing hash table (linear probing) over typed arrays.
 */
export class IntVec {
  data: Int32Array;
  length = 0;
  constructor(capacity = 1024) {
    this.data = new Int32Array(capacity);
  }
  /** Bytes held (for the memory limit). */
  get bytes(): number {
    return this.data.byteLength;
  }
  push(v: number): void {
    if (this.length === this.data.length) {
      const bigger = new Int32Array(this.data.length * 2);
      bigger.set(this.data);
      this.data = bigger;
    }
    this.data[this.length++] = v;
  }
}

/**
 * Every distinct state: its engine state id and packed trains, found again through an
 * open-addressing hash table (linear probing). Ids are handed out in order of discovery.
 */
export class StateTable {
  readonly width: number;
  trains: Uint8Array;
  engine: Int32Array;
  size = 0;
  private slots: Int32Array;
  private mask: number;
  constructor(width: number) {
    this.width = width;
    this.trains = new Uint8Array(width * 4096);
    this.engine = new Int32Array(4096);
    this.slots = new Int32Array(1 << 13).fill(-1);
    this.mask = this.slots.length - 1;
  }
  private hash(engine: number, v: Uint8Array): number {
    let h = Math.imul(engine ^ 0x9e3779b9, 0x85ebca6b);
    for (let i = 0; i < this.width; i++) h = Math.imul(h ^ v[i], 0x01000193);
    return (h ^ (h >>> 15)) >>> 0;
  }
  private equals(id: number, engine: number, v: Uint8Array): boolean {
    if (this.engine[id] !== engine) return false;
    const off = id * this.width;
    for (let i = 0; i < this.width; i++) if (this.trains[off + i] !== v[i]) return false;
    return true;
  }
  /** The id of (engine, v), adding it if new; `isNew` tells which. */
  findOrAdd(engine: number, v: Uint8Array): number {
    let i = this.hash(engine, v) & this.mask;
    for (;;) {
      const id = this.slots[i];
      if (id < 0) break;
      if (this.equals(id, engine, v)) return id;
      i = (i + 1) & this.mask;
    }
    const id = this.size++;
    if (id >= this.engine.length) {
      const engines = new Int32Array(this.engine.length * 2);
      engines.set(this.engine);
      this.engine = engines;
      const trains = new Uint8Array(this.trains.length * 2);
      trains.set(this.trains);
      this.trains = trains;
    }
    this.engine[id] = engine;
    this.trains.set(v, id * this.width);
    this.slots[i] = id;
    if (this.size * 2 > this.slots.length) this.grow();
    return id;
  }
  /** Bytes held by the table (for the memory limit). */
  get bytes(): number {
    return this.trains.byteLength + this.engine.byteLength + this.slots.byteLength;
  }
  private grow(): void {
    const slots = new Int32Array(this.slots.length * 2).fill(-1);
    const mask = slots.length - 1;
    const v = new Uint8Array(this.width);
    for (let id = 0; id < this.size; id++) {
      v.set(this.trains.subarray(id * this.width, (id + 1) * this.width));
      let i = this.hash(this.engine[id], v) & mask;
      while (slots[i] >= 0) i = (i + 1) & mask;
      slots[i] = id;
    }
    this.slots = slots;
    this.mask = mask;
  }
}
