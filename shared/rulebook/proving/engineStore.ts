/**
 * The engine side of the search: interned engine states (each distinct normalised state gets a
 * number, with its `EngineFacts` computed once), the memoised outcome of every (engine state,
 * input) pair — the engine is pure, and one engine state meets many train positions — and the
 * start of a proof.
 */
import { initialStep, signalIds, type EngineState } from "../engine";
import { canonical, engineFacts, isUnderflowChange, normalise, runInput, type EngineFacts } from "./abstraction";
import { pointsInput, type Model } from "./model";

type Named = "latches" | "counters" | "selectors" | "wanted" | "quiet" | "points" | "thrown";
const NAMED: readonly Named[] = ["latches", "counters", "selectors", "wanted", "quiet", "points", "thrown"];
/** True only while every field of EngineState is in the key: a new field is a compile error here. */
const EVERY_FIELD_KEYED: Exclude<keyof EngineState, Named | "held" | "faulted" | "clock"> extends never ? true : never = true;

/**
 * The interning key of a normalised engine state: its values in a fixed order of the names the
 * rulebook declares, as a row of integers (absent: {@link ABSENT}; a string by its number in a
 * small table; a quiet trigger armed or not; held signals as bits). Equal row ⇔ equal state, as
 * with {@link canonical}, at a fraction of its cost: a proof interns hundreds of thousands of
 * states and steps each with every input. A state with a name outside those lists, or a clock
 * not taken out (neither is expected), is keyed by its canonical text instead.
 */
const ABSENT = -0x80000000;
class EngineKeys {
  private readonly names: Record<Named, string[]>;
  private readonly signals: string[];
  private readonly strings = new Map<string, number>();
  /** Integers per row. */
  readonly width: number;
  constructor(model: Model) {
    if (!EVERY_FIELD_KEYED) throw new Error("an engine state field is missing from its key");
    const rb = model.rulebook;
    const points = model.points.map((p) => p.id);
    this.signals = signalIds(rb);
    this.names = {
      latches: Object.keys(rb.latches ?? {}),
      counters: Object.keys(rb.counters ?? {}),
      selectors: Object.keys(rb.selectors ?? {}),
      wanted: this.signals,
      quiet: model.quietRuleIds,
      points,
      thrown: points,
    };
    let width = 1 + Math.ceil(this.signals.length / 31);
    for (const field of NAMED) width += this.names[field].length;
    this.width = width;
  }
  /** Writes the row of `s` to `out`; false when `s` must be keyed by its canonical text. */
  row(s: EngineState, out: Int32Array): boolean {
    if (s.clock !== 0) return false;
    let i = 0;
    for (const field of NAMED) {
      const record = s[field] as Record<string, unknown>;
      let present = 0;
      for (const name of this.names[field]) {
        const v = record[name];
        if (v === undefined) out[i++] = ABSENT;
        else {
          present++;
          if (field === "quiet") out[i++] = 1;
          else if (typeof v === "string") out[i++] = this.code(v);
          else if (typeof v === "boolean") out[i++] = v ? 1 : 0;
          else if (Number.isInteger(v) && (v as number) > ABSENT && (v as number) <= 0x7fffffff) out[i++] = v as number;
          else return false;
        }
      }
      if (present !== Object.keys(record).length) return false;
    }
    out[i++] = s.faulted === null ? ABSENT : this.code(s.faulted.reason);
    const heldAt = i;
    for (let w = 0; w < this.width - heldAt; w++) out[heldAt + w] = 0;
    for (const signal of s.held) {
      const b = this.signals.indexOf(signal);
      if (b < 0) return false;
      out[heldAt + Math.floor(b / 31)] |= 1 << (b % 31);
    }
    return true;
  }
  private code(text: string): number {
    let c = this.strings.get(text);
    if (c === undefined) {
      c = this.strings.size;
      this.strings.set(text, c);
    }
    return c;
  }
}

/** Rows of integers of one width, each with an id, found again by open addressing (linear probing). */
class RowTable {
  private rows: Int32Array;
  private ids: Int32Array;
  private slots: Int32Array;
  private count = 0;
  constructor(private readonly width: number) {
    this.rows = new Int32Array(width * 1024);
    this.ids = new Int32Array(1024);
    this.slots = new Int32Array(2048).fill(-1);
  }
  /** The id of `row`, or -1. */
  find(row: Int32Array): number {
    const mask = this.slots.length - 1;
    for (let i = this.hash(row, 0) & mask; ; i = (i + 1) & mask) {
      const at = this.slots[i];
      if (at < 0) return -1;
      if (this.equals(at, row)) return this.ids[at];
    }
  }
  add(row: Int32Array, id: number): void {
    if (this.count === this.ids.length) {
      const rows = new Int32Array(this.rows.length * 2);
      rows.set(this.rows);
      this.rows = rows;
      const ids = new Int32Array(this.ids.length * 2);
      ids.set(this.ids);
      this.ids = ids;
    }
    const at = this.count++;
    this.rows.set(row, at * this.width);
    this.ids[at] = id;
    if (this.count * 2 > this.slots.length) this.rehash(this.slots.length * 2);
    else this.place(at, this.slots);
  }
  get bytes(): number {
    return this.rows.byteLength + this.ids.byteLength + this.slots.byteLength;
  }
  private place(at: number, slots: Int32Array): void {
    const mask = slots.length - 1;
    let i = this.hash(this.rows, at * this.width) & mask;
    while (slots[i] >= 0) i = (i + 1) & mask;
    slots[i] = at;
  }
  private rehash(size: number): void {
    const slots = new Int32Array(size).fill(-1);
    for (let at = 0; at < this.count; at++) this.place(at, slots);
    this.slots = slots;
  }
  private equals(at: number, row: Int32Array): boolean {
    const off = at * this.width;
    for (let k = 0; k < this.width; k++) if (this.rows[off + k] !== row[k]) return false;
    return true;
  }
  private hash(src: Int32Array, from: number): number {
    let h = 0x811c9dc5;
    for (let k = 0; k < this.width; k++) {
      h = Math.imul(h ^ src[from + k], 0x01000193);
      h ^= h >>> 15;
    }
    return h >>> 0;
  }
}

/** Interned engine states, with the outcome of every (engine state, input) pair memoised. */
export class EngineStore {
  readonly states: EngineState[] = [];
  readonly facts: EngineFacts[] = [];
  /** States keyed by canonical text (only those {@link EngineKeys.row} cannot key). */
  private ids = new Map<string, number>();
  private memoNext: Int32Array;
  private memoUnderflow: Uint8Array;
  private readonly keys: EngineKeys;
  private readonly rows: RowTable;
  private readonly row: Int32Array;
  constructor(private readonly model: Model) {
    this.keys = new EngineKeys(model);
    this.rows = new RowTable(this.keys.width);
    this.row = new Int32Array(this.keys.width);
    this.memoNext = new Int32Array(1024 * Math.max(1, model.inputs.length)).fill(-1);
    this.memoUnderflow = new Uint8Array(this.memoNext.length);
  }
  intern(s: EngineState): number {
    const n = normalise(s);
    const byRow = this.keys.row(n, this.row);
    const key = byRow ? "" : canonical(n);
    let id = byRow ? this.rows.find(this.row) : (this.ids.get(key) ?? -1);
    if (id < 0) {
      id = this.states.length;
      if (byRow) this.rows.add(this.row, id);
      else this.ids.set(key, id);
      this.states.push(n);
      this.facts.push(engineFacts(this.model, n));
      const nInputs = this.model.inputs.length;
      if ((id + 1) * nInputs > this.memoNext.length) {
        const next = new Int32Array(this.memoNext.length * 2).fill(-1);
        next.set(this.memoNext);
        this.memoNext = next;
        const under = new Uint8Array(next.length);
        under.set(this.memoUnderflow);
        this.memoUnderflow = under;
      }
    }
    return id;
  }
  /** The engine state after `input`; `underflow` then says whether that step drove a counter below 0. */
  after(engine: number, input: number): number {
    const slot = engine * this.model.inputs.length + input;
    let next = this.memoNext[slot];
    if (next < 0) {
      const { state, changes } = runInput(this.model, this.states[engine], this.model.inputs[input]);
      next = this.intern(state);
      this.memoNext[slot] = next;
      this.memoUnderflow[slot] = changes.some(isUnderflowChange) ? 1 : 0;
    }
    return next;
  }
  underflows(engine: number, input: number): boolean {
    return this.memoUnderflow[engine * this.model.inputs.length + input] === 1;
  }
  get bytes(): number {
    return this.memoNext.byteLength + this.memoUnderflow.byteLength + this.rows.bytes;
  }
}

/**
 * The start of a proof (§4 "Start", §5): initial values, settle, then — when points are
 * modelled — each modelled points reported `normal` once, in id order (inputs, not moves).
 */
export function startState(model: Model): { state: EngineState; underflow: boolean } {
  const start = initialStep(model.rulebook, 0);
  let state = start.state;
  let underflow = start.changes.some(isUnderflowChange);
  for (const p of model.points) {
    const r = runInput(model, state, model.inputs[pointsInput(model, p.index, "normal")]);
    state = r.state;
    underflow ||= r.changes.some(isUnderflowChange);
  }
  return { state, underflow };
}
