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
 * rulebook declares, as one JSON array (absent: null). Equal key ⇔ equal state, as with
 * {@link canonical}, at a fraction of its cost (the search interns hundreds of thousands). A state
 * with a name outside those lists (none is expected) falls back to the canonical text.
 */
class EngineKeys {
  private readonly names: Record<Named, string[]>;
  private readonly values: unknown[] = [];
  constructor(model: Model) {
    if (!EVERY_FIELD_KEYED) throw new Error("an engine state field is missing from its key");
    const rb = model.rulebook;
    const points = model.points.map((p) => p.id);
    this.names = {
      latches: Object.keys(rb.latches ?? {}),
      counters: Object.keys(rb.counters ?? {}),
      selectors: Object.keys(rb.selectors ?? {}),
      wanted: signalIds(rb),
      quiet: model.quietRuleIds,
      points,
      thrown: points,
    };
  }
  of(s: EngineState): string {
    const values = this.values;
    values.length = 0;
    for (const field of NAMED) {
      const record = s[field] as Record<string, unknown>;
      const names = this.names[field];
      let present = 0;
      for (const name of names) {
        const v = record[name];
        if (v === undefined) values.push(null);
        else {
          values.push(v);
          present++;
        }
      }
      if (present !== Object.keys(record).length) return `c${canonical(s)}`;
    }
    values.push(s.held, s.faulted === null ? null : s.faulted.reason, s.clock);
    return JSON.stringify(values);
  }
}

/** Interned engine states, with the outcome of every (engine state, input) pair memoised. */
export class EngineStore {
  readonly states: EngineState[] = [];
  readonly facts: EngineFacts[] = [];
  private ids = new Map<string, number>();
  private memoNext: Int32Array;
  private memoUnderflow: Uint8Array;
  private readonly keys: EngineKeys;
  constructor(private readonly model: Model) {
    this.keys = new EngineKeys(model);
    this.memoNext = new Int32Array(1024 * Math.max(1, model.inputs.length)).fill(-1);
    this.memoUnderflow = new Uint8Array(this.memoNext.length);
  }
  intern(s: EngineState): number {
    const n = normalise(s);
    const key = this.keys.of(n);
    let id = this.ids.get(key);
    if (id === undefined) {
      id = this.states.length;
      this.ids.set(key, id);
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
    return this.memoNext.byteLength + this.memoUnderflow.byteLength;
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
