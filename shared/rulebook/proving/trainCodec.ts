/**
 * The compact form in which the state table keeps packed trains (environment.ts): bit fields in
 * 32-bit words instead of a byte per field. The search works on the byte form; the table
 * encodes each state once when it is stored and decodes it when it is expanded.
 *
 * A slot `[axles, route, open, p0 … p(maxAxles-1)]` is stored as its axle count, route, open
 * flag, the leading axle's position `p0` and one *step* bit per following axle, `p(k-1) − p(k)`.
 * That is exact because neighbouring axles of a train are never more than one detector apart
 * (docs/prover.md, "Axle order"): the axle rule keeps every step 0 or 1, and a new train starts
 * with all its axles level. Positions past a slot's axle count, and unused slots, are all zero in
 * the byte form, so equal bytes ⇔ equal words. {@link TrainCodec.encode} refuses anything else.
 * Each group's stream count (lazy split, environment.ts) is one more field.
 */
import * as env from "./environment";
import type { Model } from "./model";

// Local copies: imported bindings are read through getters by some loaders, on the hot path.
const SLOT_AXLES = env.SLOT_AXLES;
const SLOT_ROUTE = env.SLOT_ROUTE;
const SLOT_OPEN = env.SLOT_OPEN;
const SLOT_POS = env.SLOT_POS;

/** Bits needed to hold 0…max. */
function bitsFor(max: number): number {
  return max <= 0 ? 0 : 32 - Math.clz32(max);
}

export class TrainCodec {
  /** 32-bit words per state. */
  readonly words: number;
  private readonly width: number;
  private readonly maxAxles: number;
  /** Per unit (a group's train count, or a slot): its byte offset, and where its bits go. */
  private readonly unitAt: Int32Array;
  private readonly unitIsSlot: Uint8Array;
  private readonly unitWord: Int32Array;
  private readonly unitShift: Int32Array;
  private readonly unitBits: Int32Array;
  /** Group g's words are `groupWord[g] … groupWord[g+1]`, its units `groupUnit[g] … groupUnit[g+1]`. */
  private readonly groupWord: Int32Array;
  private readonly groupUnit: Int32Array;
  /** Bit offsets inside a slot's value: route, open flag, leading position, first step. */
  private readonly routeShift: number;
  private readonly openShift: number;
  private readonly leadShift: number;
  private readonly stepShift: number;
  private readonly axleMask: number;
  private readonly routeMask: number;
  private readonly leadMask: number;

  constructor(model: Model, pack: env.Packing) {
    this.width = pack.width;
    this.maxAxles = model.maxAxles;
    const axleBits = bitsFor(model.maxAxles);
    const routeBits = bitsFor(model.widestGroup);
    const leadBits = bitsFor(Math.max(0, ...model.routes.map((r) => r.path.length)));
    this.routeShift = axleBits;
    this.openShift = this.routeShift + routeBits;
    this.leadShift = this.openShift + 1;
    this.stepShift = this.leadShift + leadBits;
    this.axleMask = (1 << axleBits) - 1;
    this.routeMask = (1 << routeBits) - 1;
    this.leadMask = (1 << leadBits) - 1;
    const slotBits = this.stepShift + model.maxAxles - 1;
    if (slotBits > 31) throw new Error("a train slot does not fit the compact form");
    const at: number[] = [];
    const isSlot: number[] = [];
    const word: number[] = [];
    const shift: number[] = [];
    const bits: number[] = [];
    let w = 0;
    let used = 0;
    const add = (offset: number, slot: boolean, n: number): void => {
      if (used + n > 32) {
        w++;
        used = 0;
      }
      at.push(offset);
      isSlot.push(slot ? 1 : 0);
      word.push(w);
      shift.push(used);
      bits.push(n);
      used += n;
    };
    const groupWords: number[] = [];
    const groupUnits: number[] = [];
    for (const g of model.groups) {
      const b = pack.base[g.index];
      // Each group starts a word of its own, so one group can be encoded again alone.
      if (used > 0) {
        w++;
        used = 0;
      }
      groupWords.push(w);
      groupUnits.push(at.length);
      add(b, false, bitsFor(model.maxTrains));
      for (let t = 0; t < model.maxTrains; t++) add(b + 1 + t * pack.slotWidth, true, slotBits);
      add(pack.stream[g.index], false, bitsFor(model.maxTrains * model.maxAxles));
    }
    this.words = w + 1;
    groupWords.push(this.words);
    groupUnits.push(at.length);
    this.groupWord = Int32Array.from(groupWords);
    this.groupUnit = Int32Array.from(groupUnits);
    this.unitAt = Int32Array.from(at);
    this.unitIsSlot = Uint8Array.from(isSlot);
    this.unitWord = Int32Array.from(word);
    this.unitShift = Int32Array.from(shift);
    this.unitBits = Int32Array.from(bits);
  }

  /** Writes the compact form of `v` to `out[at … at + words)`. */
  encode(v: Uint8Array, out: Int32Array, at: number): void {
    for (let g = 0; g + 1 < this.groupWord.length; g++) this.encodeGroup(v, g, out, at);
  }

  /** Writes the words of group `g` only (the others in `out` are left as they are). */
  encodeGroup(v: Uint8Array, g: number, out: Int32Array, at: number): void {
    out.fill(0, at + this.groupWord[g], at + this.groupWord[g + 1]);
    const { unitAt, unitIsSlot, unitWord, unitShift, unitBits } = this;
    for (let i = this.groupUnit[g], end = this.groupUnit[g + 1]; i < end; i++) {
      const a = unitAt[i];
      let value = v[a];
      if (unitIsSlot[i] !== 0) {
        const axles = v[a + SLOT_AXLES];
        const route = v[a + SLOT_ROUTE];
        const open = v[a + SLOT_OPEN];
        const lead = v[a + SLOT_POS];
        let ok = axles <= this.axleMask && route <= this.routeMask && open <= 1 && lead <= this.leadMask;
        value = axles | (route << this.routeShift) | (open << this.openShift) | (lead << this.leadShift);
        for (let k = 1; k < axles; k++) {
          const step = v[a + SLOT_POS + k - 1] - v[a + SLOT_POS + k];
          if (step === 1) value |= 1 << (this.stepShift + k - 1);
          else if (step !== 0) ok = false;
        }
        // Positions past the axle count (and of an empty slot) are zero in the byte form.
        for (let k = Math.max(axles, 1); k < this.maxAxles; k++) if (v[a + SLOT_POS + k] !== 0) ok = false;
        if (!ok) throw new Error(`packed trains outside the compact form (byte ${a})`);
      } else if (value >>> unitBits[i] !== 0) throw new Error(`packed trains outside the compact form (byte ${a})`);
      out[at + unitWord[i]] |= value << unitShift[i];
    }
  }

  /** Writes the byte form of the words at `src[at …]` to `v`. */
  decode(src: Int32Array, at: number, v: Uint8Array): void {
    v.fill(0, 0, this.width);
    const { unitAt, unitIsSlot, unitWord, unitShift, unitBits } = this;
    for (let i = 0; i < unitAt.length; i++) {
      const value = (src[at + unitWord[i]] >>> unitShift[i]) & ((1 << unitBits[i]) - 1);
      const a = unitAt[i];
      if (unitIsSlot[i] === 0) {
        v[a] = value;
        continue;
      }
      const axles = value & this.axleMask;
      v[a + SLOT_AXLES] = axles;
      v[a + SLOT_ROUTE] = (value >>> this.routeShift) & this.routeMask;
      v[a + SLOT_OPEN] = (value >>> this.openShift) & 1;
      let p = (value >>> this.leadShift) & this.leadMask;
      v[a + SLOT_POS] = p;
      for (let k = 1; k < axles; k++) {
        p -= (value >>> (this.stepShift + k - 1)) & 1;
        v[a + SLOT_POS + k] = p;
      }
    }
  }
}
