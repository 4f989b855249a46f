/**
 * The environment of CONTRACT.md §5: where the trains are, packed into bytes, and every move
 * the environment may make from a state — each rule written once, here. The search, the
 * decoding of counterexamples and the replay all enumerate moves through {@link forEachMove},
 * so they cannot disagree about what a move is.
 *
 * ## Packed trains
 * Per facing group (routes sharing signal, approach and entry; a plain route is a group of one):
 * the number of trains, then `maxTrains` slots, front train first (unused slots all zero), each
 * `[axles, route, p0 … p(maxAxles-1)]`: the train's axle count, its route (0 = not yet fixed,
 * `c + 1` = route `c` of the group) and the number of path detectors each axle has crossed,
 * leading axle first. Equal trains ⇔ equal bytes.
 *
 * ## Move codes
 * arrivals (group, axles) | axle crossings (group, slot, axle, route fixed at this crossing or 0)
 * | quiet firings (rule) | points reports (points, position).
 */
import type { EngineFacts } from "./abstraction";
import type { Model } from "./model";

export interface Packing {
  width: number;
  /** Offset of each group's block. */
  base: number[];
  slotWidth: number;
}

export function packing(model: Model): Packing {
  const slotWidth = 2 + model.maxAxles;
  const base: number[] = [];
  let width = 0;
  for (let g = 0; g < model.groups.length; g++) {
    base.push(width);
    width += 1 + model.maxTrains * slotWidth;
  }
  return { width, base, slotWidth };
}

/** Offsets into a slot. */
export const SLOT_AXLES = 0;
export const SLOT_ROUTE = 1;
export const SLOT_POS = 2;
/** "No train ahead" in the ahead-has-cleared test. */
const NONE_AHEAD = 255;

export const MOVE_ARRIVAL = 1;
/** The leading axle crossed entry with the points lying for no route of its group (§5: the branch ends). */
export const MOVE_MISROUTED = 2;
/** Power-worked points start to move under a train or a cleared signal (`points-locked` fails). */
export const MOVE_UNLOCKED = 4;

export interface MoveCodes {
  pulseBase: number;
  quietBase: number;
  pointsBase: number;
  /** Choices per axle crossing: 0 (no route fixed) and one per route of the widest group. */
  choices: number;
  total: number;
}

export function moveCodes(model: Model): MoveCodes {
  const choices = model.widestGroup + 1;
  const pulseBase = model.groups.length * model.maxAxles;
  const quietBase = pulseBase + model.groups.length * model.maxTrains * model.maxAxles * choices;
  const pointsBase = quietBase + model.quietRuleIds.length;
  return { pulseBase, quietBase, pointsBase, choices, total: pointsBase + model.points.length * 3 };
}

/**
 * The §5 rule for one axle crossing the next detector of its path, on packed positions:
 * - it has a next detector (`p < length`);
 * - order: the axle ahead of it has already crossed that detector;
 * - spacing: the axle behind it has crossed the previous detector (so it is level with this one);
 * - the train ahead has cleared that detector (`aheadLast > p`: its last axle crossed it);
 * - the leading axle crosses `entry` only while the signal shows non-danger.
 */
export function axleMayCross(
  cur: Uint8Array,
  slot: number,
  k: number,
  length: number,
  aheadLast: number,
  entry: number,
  proceed: boolean,
): boolean {
  const axles = cur[slot + SLOT_AXLES];
  const p = cur[slot + SLOT_POS + k];
  if (p >= length) return false;
  if (k > 0 && cur[slot + SLOT_POS + k - 1] <= p) return false;
  if (k < axles - 1 && cur[slot + SLOT_POS + k + 1] < p) return false;
  if (aheadLast <= p) return false;
  if (k === 0 && p === entry && !proceed) return false;
  return true;
}

/** Bit r set: a train of route r is between the signal and the route's first exit detector. */
export function betweenMask(model: Model, pack: Packing, cur: Uint8Array): number {
  let mask = 0;
  const { base, slotWidth } = pack;
  for (const g of model.groups) {
    const n = cur[base[g.index]];
    for (let t = 0; t < n; t++) {
      const slot = base[g.index] + 1 + t * slotWidth;
      const tag = cur[slot + SLOT_ROUTE];
      if (tag === 0) continue;
      const last = cur[slot + SLOT_POS + cur[slot + SLOT_AXLES] - 1];
      if (last <= g.entryIndex + 1) mask |= 1 << g.routes[tag - 1];
    }
  }
  return mask;
}

/** Receives one move: its code, the engine input it gives (-1: none) and MOVE_* flags; `nxt` holds the trains after it. */
export type MoveVisitor = (code: number, input: number, flags: number) => void;

/**
 * Every move of the environment from the state (engine facts, trains `cur`), in a fixed order:
 * for each group its arrivals then its axle crossings, then quiet firings, then points moves.
 * Before each call of `visit`, `nxt` is filled with the trains after the move (for a misrouted
 * crossing, which has no successor, with the trains as they were).
 */
export function forEachMove(
  model: Model,
  pack: Packing,
  codes: MoveCodes,
  facts: EngineFacts,
  cur: Uint8Array,
  nxt: Uint8Array,
  visit: MoveVisitor,
): void {
  const { maxAxles, maxTrains, groups, routes } = model;
  const { base, slotWidth } = pack;
  const proceedMask = facts.proceedMask;
  for (let g = 0; g < groups.length; g++) {
    const group = groups[g];
    const b = base[g];
    const n = cur[b];
    // A train arrives at the back of the group's queue.
    if (n < maxTrains) {
      for (let a = 1; a <= maxAxles; a++) {
        nxt.set(cur);
        nxt[b] = n + 1;
        nxt[b + 1 + n * slotWidth + SLOT_AXLES] = a;
        visit(g * maxAxles + (a - 1), -1, MOVE_ARRIVAL);
      }
    }
    const entry = group.entryIndex;
    const proceed = (proceedMask & (1 << group.routes[0])) !== 0;
    for (let t = 0; t < n; t++) {
      const slot = b + 1 + t * slotWidth;
      const axles = cur[slot + SLOT_AXLES];
      const tag = cur[slot + SLOT_ROUTE];
      // Before entry the train ahead in the group; past it the train ahead on the same route.
      const aheadShared = t > 0 ? lastAxle(cur, slot - slotWidth) : NONE_AHEAD;
      let aheadOwn = NONE_AHEAD;
      if (tag !== 0) {
        for (let u = t - 1; u >= 0; u--) {
          const other = b + 1 + u * slotWidth;
          if (cur[other + SLOT_ROUTE] === tag) {
            aheadOwn = lastAxle(cur, other);
            break;
          }
        }
      }
      const route = tag === 0 ? routes[group.routes[0]] : routes[group.routes[tag - 1]];
      // An unfixed train's path ends at entry: crossing it fixes the route.
      const length = tag === 0 ? entry + 1 : route.path.length;
      for (let k = 0; k < axles; k++) {
        const p = cur[slot + SLOT_POS + k];
        const ahead = p <= entry ? aheadShared : aheadOwn;
        if (!axleMayCross(cur, slot, k, length, ahead, entry, proceed)) continue;
        const input = route.pathInput[p];
        const code = codes.pulseBase + ((g * maxTrains + t) * maxAxles + k) * codes.choices;
        if (tag === 0 && k === 0 && p === entry) {
          // §5: the route is the one of the group whose points all lie as reported now.
          const matching = group.routeMask & facts.routesSetMask;
          if (matching === 0) {
            nxt.set(cur);
            visit(code, input, MOVE_MISROUTED);
            continue;
          }
          for (let c = 0; c < group.routes.length; c++) {
            if ((matching & (1 << group.routes[c])) === 0) continue;
            nxt.set(cur);
            nxt[slot + SLOT_POS] = p + 1;
            nxt[slot + SLOT_ROUTE] = c + 1;
            visit(code + c + 1, input, 0);
          }
          continue;
        }
        nxt.set(cur);
        nxt[slot + SLOT_POS + k] = p + 1;
        if (k === axles - 1 && p + 1 === length) {
          // The last axle crossed the last exit: the train leaves; the trains behind move up.
          nxt.copyWithin(slot, slot + slotWidth, b + 1 + maxTrains * slotWidth);
          nxt.fill(0, b + 1 + (maxTrains - 1) * slotWidth, b + 1 + maxTrains * slotWidth);
          nxt[b] = n - 1;
        }
        visit(code, input, 0);
      }
    }
  }
  // An armed quiet trigger fires (at any time: the prover does not trust timing).
  const firstQuiet = model.pointsBase - model.quietRuleIds.length;
  for (const input of facts.armed) {
    nxt.set(cur);
    visit(codes.quietBase + (input - firstQuiet), input, 0);
  }
  // Points move: power-worked towards where last thrown, hand-worked while nothing is under them.
  if (facts.powerMoves.length === 0 && facts.handMoves.length === 0) return;
  const under = betweenMask(model, pack, cur);
  for (const move of facts.powerMoves) {
    const neededBy = model.points[move.points].neededBy;
    const unlocked = move.starting && ((under | proceedMask) & neededBy) !== 0;
    nxt.set(cur);
    visit(codes.pointsBase + (move.input - model.pointsBase), move.input, unlocked ? MOVE_UNLOCKED : 0);
  }
  for (const move of facts.handMoves) {
    if ((under & model.points[move.points].neededBy) !== 0) continue;
    nxt.set(cur);
    visit(codes.pointsBase + (move.input - model.pointsBase), move.input, 0);
  }
}

function lastAxle(cur: Uint8Array, slot: number): number {
  return cur[slot + SLOT_POS + cur[slot + SLOT_AXLES] - 1];
}

/** What a move code says, for counterexamples (trains numbered by the caller). */
export type DecodedMove =
  | { type: "arrive"; group: number; axles: number }
  | { type: "pulse"; group: number; slot: number; axle: number; choice: number }
  | { type: "quiet"; rule: number }
  | { type: "points"; points: number; lie: number };

export function decodeMove(model: Model, codes: MoveCodes, code: number): DecodedMove {
  const { maxAxles, maxTrains } = model;
  if (code < codes.pulseBase) return { type: "arrive", group: Math.floor(code / maxAxles), axles: (code % maxAxles) + 1 };
  if (code < codes.quietBase) {
    const c = code - codes.pulseBase;
    const choice = c % codes.choices;
    const rest = Math.floor(c / codes.choices);
    return { type: "pulse", axle: rest % maxAxles, slot: Math.floor(rest / maxAxles) % maxTrains, group: Math.floor(rest / (maxAxles * maxTrains)), choice };
  }
  if (code < codes.pointsBase) return { type: "quiet", rule: code - codes.quietBase };
  const c = code - codes.pointsBase;
  return { type: "points", points: Math.floor(c / 3), lie: c % 3 };
}
