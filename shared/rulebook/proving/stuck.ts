/**
 * `no-stuck-train` (CONTRACT.md §5), decided once the search is done: for each group, which
 * states can reach one where the group's signal shows a proceed through non-arrival moves only
 * (pulses, reveals, quiet firings, points moves). A reachable state where a train of the group
 * waits at danger and that cannot is a stuck train; the earliest (least depth) over all groups
 * is the counterexample.
 *
 * An open train of the reduced search stands for several trains (environment.ts, "lazy
 * length"), and a state is stuck when *any* of them is: so reachability is computed per hidden
 * length, as bit sets ({@link Hidden}). An edge that reveals an axle in group g maps the target's
 * bit for `d_g` to the source's bit for `d_g + 1`; an edge that closes the group-g train keeps
 * only `d_g = 0` (its target has no open train there); other edges keep every bit.
 *
 * Two ways to the same sets:
 * - **in progress order** (the usual case): every pulse and reveal lowers the trains' *progress*
 *   (environment.ts {@link remainingProgress}), and a quiet firing that leaves it equal lowers the
 *   number of armed triggers; when every stored edge goes down that order, the non-arrival graph
 *   has no cycle and one pass over the states in ascending order, each taking the bits of its
 *   successors, gives every set exactly — no inverted edges, each edge read once per group;
 * - **by a worklist** otherwise (points moves and quiet rules can go round in circles): the bits
 *   flow backwards over the inverted edges until nothing grows.
 * Both compute the least sets closed under the edges, so they give the same answer.
 */
import type { Model } from "./model";

/** The stored non-arrival edges of a finished search, grouped by source state. */
export interface EdgeStore {
  /** Edges of state s: `count[s]` of them from `start[s]` on, in `to` and `kind`. */
  start: Int32Array;
  count: ArrayLike<number>;
  to: Int32Array;
  /**
   * 0; or 1 + g for an edge that reveals an axle of the open train of group g; or, with G
   * groups, `1 + G + 2·(c·G + g) + open` for one branch of a lazy split of group g's stream taking
   * route choice c (open: the branch's train is open). See {@link splitKind}.
   */
  kind: ArrayLike<number>;
  total: number;
}

/** The edge kind of a branch of a lazy split (EdgeStore.kind). */
export function splitKind(groups: number, group: number, choice: number, open: boolean): number {
  return 1 + groups + 2 * (choice * groups + group) + (open ? 1 : 0);
}

/**
 * The trains an open train of the reduced search stands for, as bits: with `B = maxAxles`, bit
 * `Σ d_g · B^g` stands for the group-g open train having `d_g` axles more than it shows (groups
 * without an open train have `d_g = 0`). One bit when no train is open, or in the plain search.
 */
export interface Hidden {
  /** B (maxAxles) when open trains are tracked, else 1 (no hidden axles). */
  base: number;
  groups: number;
  words: number;
  /** Shown axles of each group's open train (0: none) in state s, written into `out`. */
  openOf: (state: number, out: Int32Array) => void;
}

/** What the decision reads of a finished search. */
export interface StuckQuestion {
  model: Model;
  nStates: number;
  proceedMaskOf: (state: number) => number;
  waitMaskOf: { data: ArrayLike<number> };
  depthOf: { data: ArrayLike<number> };
  edges: EdgeStore;
  hidden: Hidden;
  /** Per state, a key that every non-arrival edge lowers when the graph has no cycle (else anything). */
  order?: ArrayLike<number>;
}

export interface StuckTrain {
  state: number;
  group: number;
  /** The stuck train's hidden length per group (0 for closed trains). */
  extra: number[];
}

/**
 * How the sets were computed (for tests and the bench). "unsupported": the graph has lazy
 * splits but goes round in circles, and the worklist cannot take splits; nothing was decided.
 */
export type StuckPass = "progress-order" | "worklist" | "unsupported";

/** The earliest stuck train, if any, and which pass found the sets. */
export function findStuckTrain(q: StuckQuestion): { stuck: StuckTrain | undefined; pass: StuckPass } {
  const { model, nStates, hidden } = q;
  const { words } = hidden;
  const valid = validSets(model, nStates, hidden);
  const ascending = q.order ? ascendingIfAcyclic(q.order, nStates, q.edges) : undefined;
  if (!ascending && hasSplits(q.edges, model.groups.length)) return { stuck: undefined, pass: "unsupported" };
  const reach = ascending ? new InOrder(q, valid, ascending) : new Worklist(q, valid);

  let best: StuckTrain | undefined;
  for (const group of model.groups) {
    const bit = 1 << group.index;
    let anyWaiting = false;
    for (let s = 0; s < nStates && !anyWaiting; s++) if (q.waitMaskOf.data[s] & bit) anyWaiting = true;
    if (!anyWaiting) continue;
    const canReach = reach.run(1 << group.routes[0]);
    for (let s = 0; s < nStates; s++) {
      if ((q.waitMaskOf.data[s] & bit) === 0) continue;
      if (best && q.depthOf.data[s] >= q.depthOf.data[best.state]) continue;
      const mine = valid.of(s);
      for (let w = 0; w < words; w++) {
        const missing = mine[w] & ~canReach[s * words + w];
        if (missing === 0) continue;
        const index = w * 32 + (31 - Math.clz32(missing & -missing));
        const extra: number[] = [];
        for (let g = 0, rest = index; g < hidden.groups; g++, rest = Math.floor(rest / hidden.base)) extra.push(rest % hidden.base);
        best = { state: s, group: group.index, extra };
        break;
      }
    }
  }
  return { stuck: best, pass: ascending ? "progress-order" : "worklist" };
}

/** The bits each state's trains stand for: one set per distinct set of open trains. */
interface ValidSets {
  of(state: number): Int32Array;
}

function validSets(model: Model, nStates: number, hidden: Hidden): ValidSets {
  const B = hidden.base;
  if (B <= 1) {
    const one = Int32Array.of(1);
    return { of: () => one };
  }
  const sets: Int32Array[] = [];
  const index = new Uint16Array(nStates);
  const known = new Map<number, number>();
  const open = new Int32Array(model.groups.length);
  const total = Math.pow(B, hidden.groups);
  for (let s = 0; s < nStates; s++) {
    hidden.openOf(s, open);
    let key = 0;
    for (let g = 0; g < open.length; g++) key = key * (model.maxAxles + 1) + open[g];
    let i = known.get(key);
    if (i === undefined) {
      const bits = new Int32Array(hidden.words);
      for (let b = 0; b < total; b++) {
        let ok = true;
        for (let g = 0, rest = b; g < hidden.groups; g++, rest = Math.floor(rest / B)) {
          if (rest % B > (open[g] === 0 ? 0 : model.maxAxles - open[g])) ok = false;
        }
        if (ok) bits[b >>> 5] |= 1 << (b & 31);
      }
      i = sets.length;
      sets.push(bits);
      known.set(key, i);
    }
    index[s] = i;
  }
  return { of: (s) => sets[index[s]] };
}

/**
 * The states in ascending `order`, when every edge goes strictly down it (then the graph has no
 * cycle); otherwise undefined. A counting sort: keys are small (a few hundred).
 */
function ascendingIfAcyclic(order: ArrayLike<number>, nStates: number, edges: EdgeStore): Int32Array | undefined {
  let maxKey = 0;
  for (let s = 0; s < nStates; s++) {
    const key = order[s];
    if (key > maxKey) maxKey = key;
    for (let e = edges.start[s], end = e + edges.count[s]; e < end; e++) if (order[edges.to[e]] >= key) return undefined;
  }
  const at = new Int32Array(maxKey + 2);
  for (let s = 0; s < nStates; s++) at[order[s] + 1]++;
  for (let k = 0; k <= maxKey; k++) at[k + 1] += at[k];
  const out = new Int32Array(nStates);
  for (let s = 0; s < nStates; s++) out[at[order[s]]++] = s;
  return out;
}

function hasSplits(edges: EdgeStore, groups: number): boolean {
  for (let e = 0; e < edges.total; e++) if (edges.kind[e] > groups) return true;
  return false;
}

/** Reachability sets for one signal: bit sets per state, `words` words each. */
interface Reach {
  run(signalBit: number): Int32Array;
}

/**
 * One pass in ascending progress order: each state's successors are final when it is taken.
 * The branches of a lazy split are one edge together: the state stands for every division of
 * the stream, each of which takes exactly one branch, so it can reach the proceed through the
 * split only if every branch can (for an open branch, with every hidden length). That answer is
 * on the safe side — a stream's own next axles are not used, since for some divisions they are
 * arrivals — so a stuck train it finds is only a candidate (search.ts then asks exactly).
 */
class InOrder implements Reach {
  private readonly canReach: Int32Array;
  private readonly add: Int32Array;
  private readonly all: Int32Array;
  private readonly part: Int32Array;
  constructor(
    private readonly q: StuckQuestion,
    private readonly valid: ValidSets,
    private readonly ascending: Int32Array,
  ) {
    const words = q.hidden.words;
    this.canReach = new Int32Array(q.nStates * words);
    this.add = new Int32Array(words);
    this.all = new Int32Array(words);
    this.part = new Int32Array(words);
  }
  run(signalBit: number): Int32Array {
    const { canReach, add, all, ascending, valid } = this;
    const { edges, proceedMaskOf, model, hidden } = this.q;
    const words = hidden.words;
    const G = model.groups.length;
    const shift = model.groups.map((g) => Math.pow(hidden.base, g.index));
    const { start, count, to, kind } = edges;
    for (let i = 0; i < ascending.length; i++) {
      const s = ascending[i];
      const at = s * words;
      const mine = valid.of(s);
      const proceeds = (proceedMaskOf(s) & signalBit) !== 0;
      for (let w = 0; w < words; w++) canReach[at + w] = proceeds ? mine[w] : 0;
      let split = -1;
      for (let e = start[s], end = e + count[s]; e < end; e++) {
        const t = to[e];
        const k = kind[e];
        if (k === 0) {
          for (let w = 0; w < words; w++) canReach[at + w] |= canReach[t * words + w];
        } else if (k <= G) {
          // Source bit d ↔ target bit d − B^g (one axle fewer still hidden).
          shiftUp(canReach, t * words, add, words, shift[k - 1]);
          for (let w = 0; w < words; w++) canReach[at + w] |= add[w] & mine[w];
        } else {
          const branch = (k - 1 - G) >>> 1;
          if (branch !== split) {
            if (split >= 0) for (let w = 0; w < words; w++) canReach[at + w] |= all[w] & mine[w];
            split = branch;
            all.fill(-1);
          }
          const open = ((k - 1 - G) & 1) !== 0;
          if (!open) for (let w = 0; w < words; w++) all[w] &= canReach[t * words + w];
          else this.everyHiddenLength(t, shift[branch % G], all);
        }
      }
      if (split >= 0) for (let w = 0; w < words; w++) canReach[at + w] |= all[w] & mine[w];
    }
    return canReach;
  }
  /** `all` &= for every hidden length d of the target's open train (digit step `by`): its bits at d, moved to d = 0. */
  private everyHiddenLength(t: number, by: number, all: Int32Array): void {
    const { canReach, add, part } = this;
    const words = this.q.hidden.words;
    const theirs = this.valid.of(t);
    for (let d = 0; d < this.q.hidden.base; d++) {
      // A length the open train cannot have counts as reaching (nothing to show there).
      shiftDown(canReach, t * words, add, words, d * by);
      shiftDown(theirs, 0, part, words, d * by);
      for (let w = 0; w < words; w++) all[w] &= add[w] | ~part[w];
    }
  }
}

/** Backward over the inverted edges with a first-in first-out worklist, until nothing grows. */
class Worklist implements Reach {
  private readonly start: Int32Array;
  private readonly sources: Int32Array;
  private readonly kinds: Uint8Array;
  private readonly canReach: Int32Array;
  constructor(
    private readonly q: StuckQuestion,
    private readonly valid: ValidSets,
  ) {
    const { nStates, edges } = q;
    const nEdges = edges.total;
    this.start = new Int32Array(nStates + 1);
    const start = this.start;
    for (let e = 0; e < nEdges; e++) start[edges.to[e] + 1]++;
    for (let s = 0; s < nStates; s++) start[s + 1] += start[s];
    const fill = start.slice(0, nStates);
    this.sources = new Int32Array(nEdges);
    this.kinds = new Uint8Array(nEdges);
    for (let s = 0; s < nStates; s++) {
      for (let e = edges.start[s], end = e + edges.count[s]; e < end; e++) {
        const i = fill[edges.to[e]]++;
        this.sources[i] = s;
        this.kinds[i] = edges.kind[e];
      }
    }
    this.canReach = new Int32Array(nStates * q.hidden.words);
  }
  run(signalBit: number): Int32Array {
    const { nStates, proceedMaskOf } = this.q;
    const words = this.q.hidden.words;
    const { start, sources, kinds, canReach, valid } = this;
    const shift = this.q.model.groups.map((g) => Math.pow(this.q.hidden.base, g.index));
    const queued = new Uint8Array(nStates);
    // A ring: a state is in it at most once, and is taken again only when it gained bits since
    // it was last taken (bits only grow, so this ends).
    const ring = new Int32Array(Math.max(1, nStates));
    const add = new Int32Array(words);
    canReach.fill(0);
    let head = 0;
    let queuedCount = 0;
    for (let s = 0; s < nStates; s++) {
      if (proceedMaskOf(s) & signalBit) {
        const mine = valid.of(s);
        for (let w = 0; w < words; w++) canReach[s * words + w] = mine[w];
        queued[s] = 1;
        ring[(head + queuedCount++) % nStates] = s;
      }
    }
    while (queuedCount > 0) {
      const s = ring[head];
      head = head + 1 === nStates ? 0 : head + 1;
      queuedCount--;
      queued[s] = 0;
      for (let i = start[s]; i < start[s + 1]; i++) {
        const p = sources[i];
        const kind = kinds[i];
        if (kind !== 0) {
          shiftUp(canReach, s * words, add, words, shift[kind - 1]);
          const mine = valid.of(p);
          for (let w = 0; w < words; w++) add[w] &= mine[w];
        } else {
          for (let w = 0; w < words; w++) add[w] = canReach[s * words + w];
        }
        let grew = false;
        for (let w = 0; w < words; w++) {
          const fresh = add[w] & ~canReach[p * words + w];
          if (fresh !== 0) {
            canReach[p * words + w] |= fresh;
            grew = true;
          }
        }
        if (grew && queued[p] === 0) {
          queued[p] = 1;
          let tail = head + queuedCount++;
          if (tail >= nStates) tail -= nStates;
          ring[tail] = p;
        }
      }
    }
    return canReach;
  }
}

/** `out` = the bit set at `src[from…from+words)` moved `by` bits down (towards lower indices). */
function shiftDown(src: Int32Array, from: number, out: Int32Array, words: number, by: number): void {
  const wordShift = by >>> 5;
  const bitShift = by & 31;
  for (let w = 0; w < words; w++) {
    const lo = w + wordShift;
    const a = lo < words ? src[from + lo] : 0;
    const b = lo + 1 < words ? src[from + lo + 1] : 0;
    out[w] = bitShift === 0 ? a : (a >>> bitShift) | (b << (32 - bitShift));
  }
}

/** `out` = the bit set at `src[from…from+words)` moved `by` bits up (towards higher indices). */
function shiftUp(src: Int32Array, from: number, out: Int32Array, words: number, by: number): void {
  const wordShift = by >>> 5;
  const bitShift = by & 31;
  for (let w = words - 1; w >= 0; w--) {
    const lo = w - wordShift;
    const a = lo >= 0 ? src[from + lo] : 0;
    const b = lo - 1 >= 0 ? src[from + lo - 1] : 0;
    out[w] = bitShift === 0 ? a : (a << bitShift) | (b >>> (32 - bitShift));
  }
}
