/**
 * The properties of CONTRACT.md §5: their ids and words, what a single state says about them
 * (on packed trains, used by the search and the replay alike), and the backward reachability
 * that decides `no-stuck-train` once the search is done.
 */
import type { EngineFacts } from "./abstraction";
import * as env from "./environment";
import type { Model } from "./model";

// Local copies: imported bindings are read through getters by some loaders, on the hot path.
const SLOT_AXLES = env.SLOT_AXLES;
const SLOT_POS = env.SLOT_POS;
const SLOT_ROUTE = env.SLOT_ROUTE;

/** The properties of CONTRACT.md §5, in the order results are reported. */
export const PROPERTY_IDS = [
  "settles",
  "no-underflow",
  "no-conflicting-proceeds",
  "one-train-per-section",
  "no-stuck-train",
  "priority-unhindered",
  "points-set-for-train",
  "points-locked",
] as const;
export type PropertyId = (typeof PROPERTY_IDS)[number];

/** Plain-words descriptions of each property, for result screens and the printed proof. */
export const PROPERTY_DESCRIPTIONS: Record<PropertyId, string> = {
  settles: "The logic always settles: no reachable state ends in a rule loop.",
  "no-underflow": "No counter is ever driven below zero.",
  "no-conflicting-proceeds": "No two signals of conflicting routes show a proceed aspect at the same time.",
  "one-train-per-section":
    "No two trains occupy the sections of the same route, or of conflicting routes, at the same time.",
  "no-stuck-train":
    "A train waiting at a signal at danger can always get a proceed aspect through the movements of the trains already there, quiet triggers and points, without needing another train to arrive.",
  "priority-unhindered":
    "A train on the priority route that has passed its approach is never checked at its signal when the junction is otherwise empty.",
  "points-set-for-train": "Every train passes its signal with the points lying for a route it may take.",
  "points-locked":
    "Power-worked points never start to move under a train, nor while the signal of a route that needs them shows a proceed aspect.",
};

/** The list of property ids with their descriptions, for menus and reports. */
export const PROPERTIES: { id: PropertyId; description: string }[] = PROPERTY_IDS.map((id) => ({
  id,
  description: PROPERTY_DESCRIPTIONS[id],
}));

/** The safety properties: those a single state or step can break (checked by SPIN too). */
export const SAFETY_PROPERTY_IDS = [
  "no-conflicting-proceeds",
  "one-train-per-section",
  "no-underflow",
  "settles",
  "points-set-for-train",
  "points-locked",
] as const satisfies readonly PropertyId[];

/** The properties checked for this model (priority only with a priority route, points ones with route points). */
export function propertiesOf(model: Model): PropertyId[] {
  return PROPERTY_IDS.filter((id) => {
    if (id === "priority-unhindered") return model.priority >= 0;
    if (id === "points-set-for-train" || id === "points-locked") return model.routePoints;
    return true;
  });
}

/** What one state says about the state properties. */
export interface StateVerdict {
  /** Bit g set: a train of group g waits at its signal while it shows danger. */
  waitMask: number;
  overlap: boolean;
  priorityHindered: boolean;
}

/**
 * Reads the state properties off a state. A train *occupies* its route's section from its
 * leading axle crossing entry (when its route is fixed) until it leaves; it *waits at its
 * signal* when its leading axle has crossed every approach detector but not entry.
 * `priority-unhindered` is broken when a train of the priority route's group waits at a danger
 * signal, no section is occupied and no other group has a train past its first approach detector.
 */
export function judgeState(model: Model, pack: env.Packing, facts: EngineFacts, cur: Uint8Array): StateVerdict {
  const proceed = facts.proceedMask;
  const { base, slotWidth } = pack;
  const priorityGroup = model.priority >= 0 ? model.routes[model.priority].group : -1;
  let waitMask = 0;
  let occupied = 0;
  let overlap = false;
  let priorityWaits = false;
  let othersAway = true;
  let anyOccupied = false;
  for (const group of model.groups) {
    const g = group.index;
    const n = cur[base[g]];
    const signalProceeds = (proceed & (1 << group.routes[0])) !== 0;
    for (let t = 0; t < n; t++) {
      const slot = base[g] + 1 + t * slotWidth;
      const lead = cur[slot + SLOT_POS];
      const tag = cur[slot + SLOT_ROUTE];
      if (tag !== 0) {
        // Fixed route ⇔ the leading axle has crossed entry: the train occupies the section.
        const r = group.routes[tag - 1];
        anyOccupied = true;
        if ((occupied & ((1 << r) | model.routes[r].conflictMask)) !== 0) overlap = true;
        occupied |= 1 << r;
      } else if (lead === group.entryIndex && !signalProceeds) {
        waitMask |= 1 << g;
        if (g === priorityGroup) priorityWaits = true;
      }
      if (g !== priorityGroup && lead > 0) othersAway = false;
    }
  }
  const priorityHindered =
    priorityGroup >= 0 && priorityWaits && !anyOccupied && othersAway && (proceed & (1 << model.priority)) === 0;
  return { waitMask, overlap, priorityHindered };
}

/** Axles of a packed slot, for views: the number of detectors each axle has crossed. */
export function slotPositions(cur: Uint8Array, slot: number): number[] {
  const out: number[] = [];
  for (let k = 0; k < cur[slot + SLOT_AXLES]; k++) out.push(cur[slot + SLOT_POS + k]);
  return out;
}

/** The stored non-arrival edges of a finished search, grouped by source state. */
export interface EdgeStore {
  /** Edges of state s: `count[s]` of them from `start[s]` on, in `to` and `kind`. */
  start: Int32Array;
  count: ArrayLike<number>;
  to: Int32Array;
  /** 0, or 1 + g for an edge that reveals an axle of the open train of group g (environment.ts). */
  kind: ArrayLike<number>;
  total: number;
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

/**
 * `no-stuck-train`: for each group, backward reachability over the non-arrival edges from the
 * states where its signal shows a proceed. A reachable state where a train of that group waits
 * at danger and that cannot reach such a state is a stuck train; the earliest (least depth)
 * over all groups is the counterexample.
 *
 * An open train stands for several trains (properties.ts notes on {@link Hidden}), and a state
 * is stuck when *any* of them is: so reachability is computed per hidden length, as bit sets.
 * An edge that reveals an axle in group g maps the target's bit for `d_g` to the source's bit for
 * `d_g + 1`; an edge that closes the group-g train keeps only `d_g = 0`; other edges keep every bit.
 * `extra` of the result is the stuck train's hidden length per group (0 for closed trains).
 */
export function findStuckTrain(
  model: Model,
  nStates: number,
  proceedMaskOf: (state: number) => number,
  waitMaskOf: { data: ArrayLike<number> },
  depthOf: { data: ArrayLike<number> },
  edges: EdgeStore,
  hidden: Hidden,
): { state: number; group: number; extra: number[] } | undefined {
  const { words, base: B } = hidden;
  const nEdges = edges.total;
  const start = new Int32Array(nStates + 1);
  for (let e = 0; e < nEdges; e++) start[edges.to[e] + 1]++;
  for (let s = 0; s < nStates; s++) start[s + 1] += start[s];
  const fill = start.slice(0, nStates);
  const sources = new Int32Array(nEdges);
  const kinds = new Uint8Array(nEdges);
  for (let s = 0; s < nStates; s++) {
    for (let e = edges.start[s], end = e + edges.count[s]; e < end; e++) {
      const i = fill[edges.to[e]]++;
      sources[i] = s;
      kinds[i] = edges.kind[e];
    }
  }
  // The bits of each state's trains: one bit set per distinct set of open trains, and its index per state.
  const validSets: Int32Array[] = [];
  const validIndex = new Uint16Array(nStates);
  if (B > 1) {
    const known = new Map<number, number>();
    const open = new Int32Array(model.groups.length);
    const total = Math.pow(B, hidden.groups);
    for (let s = 0; s < nStates; s++) {
      hidden.openOf(s, open);
      let key = 0;
      for (let g = 0; g < open.length; g++) key = key * (model.maxAxles + 1) + open[g];
      let index = known.get(key);
      if (index === undefined) {
        const bits = new Int32Array(words);
        for (let i = 0; i < total; i++) {
          let ok = true;
          for (let g = 0, rest = i; g < hidden.groups; g++, rest = Math.floor(rest / B)) {
            if (rest % B > (open[g] === 0 ? 0 : model.maxAxles - open[g])) ok = false;
          }
          if (ok) bits[i >>> 5] |= 1 << (i & 31);
        }
        index = validSets.length;
        validSets.push(bits);
        known.set(key, index);
      }
      validIndex[s] = index;
    }
  } else {
    validSets.push(Int32Array.of(1));
  }
  const validOf = (s: number): Int32Array => validSets[validIndex[s]];
  const revealShift = model.groups.map((g) => Math.pow(B, g.index));

  let best: { state: number; group: number; extra: number[] } | undefined;
  const canReach = new Int32Array(nStates * words);
  const queued = new Uint8Array(nStates);
  // A first-in first-out worklist (a ring: a state is in it at most once): bits flow backwards
  // from the states where the signal shows a proceed, and a state is taken again only when it
  // gained bits since it was last taken (bits only grow, so this ends).
  const ring = new Int32Array(Math.max(1, nStates));
  const add = new Int32Array(words);
  for (const group of model.groups) {
    const bit = 1 << group.index;
    const signalBit = 1 << group.routes[0];
    let anyWaiting = false;
    for (let s = 0; s < nStates && !anyWaiting; s++) if (waitMaskOf.data[s] & bit) anyWaiting = true;
    if (!anyWaiting) continue;
    canReach.fill(0);
    let head = 0;
    let queuedCount = 0;
    for (let s = 0; s < nStates; s++) {
      if (proceedMaskOf(s) & signalBit) {
        const valid = validOf(s);
        for (let w = 0; w < words; w++) canReach[s * words + w] = valid[w];
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
          // Source bit d ↔ target bit d − B^g (one axle fewer still hidden).
          shiftUp(canReach, s * words, add, words, revealShift[kind - 1]);
          const valid = validOf(p);
          for (let w = 0; w < words; w++) add[w] &= valid[w];
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
    for (let s = 0; s < nStates; s++) {
      if ((waitMaskOf.data[s] & bit) === 0) continue;
      if (best && depthOf.data[s] >= depthOf.data[best.state]) continue;
      const valid = validOf(s);
      for (let w = 0; w < words; w++) {
        const missing = valid[w] & ~canReach[s * words + w];
        if (missing === 0) continue;
        const index = w * 32 + (31 - Math.clz32(missing & -missing));
        const extra: number[] = [];
        for (let g = 0, rest = index; g < hidden.groups; g++, rest = Math.floor(rest / B)) extra.push(rest % B);
        best = { state: s, group: group.index, extra };
        break;
      }
    }
  }
  return best;
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
