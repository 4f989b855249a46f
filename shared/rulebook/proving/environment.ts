/**
 * The environment of CONTRACT.md §5: where the trains are, packed into bytes, and every move
 * the environment may make from a state — each rule written once, here. The search, the
 * decoding of counterexamples and the replay all enumerate moves through {@link forEachMove},
 * so they cannot disagree about what a move is.
 *
 * ## Packed trains
 * Per facing group (routes sharing signal, approach and entry; a plain route is a group of one):
 * the number of trains, then `maxTrains` slots, front train first (unused slots all zero), each
 * `[axles, route, open, p0 … p(maxAxles-1)]`: the train's axle count, its route (0 = not yet
 * fixed, `c + 1` = route `c` of the group), whether its length is still open (reduced search
 * only, see below) and the number of path detectors each axle has crossed, leading axle first.
 * Equal trains ⇔ equal bytes.
 *
 * ## The reduced environment (docs/prover.md, "Reductions")
 * The plain environment is §5 word for word. The reduced one (the default) is the same
 * environment seen through two exact abstractions; the search prices its moves so that
 * counterexample lengths are the plain ones:
 * - *lazy arrival*: a train that has arrived but crossed nothing is invisible to the engine and
 *   to every property, so no state holds one; an arrival is fused with its leading axle crossing
 *   the first detector (one edge worth two §5 moves, {@link MOVE_FUSED});
 * - *lazy length*: a train is not given its axle count when it arrives. An *open* train of `m`
 *   axles stands for every train of `m` or more axles whose first `m` axles lie as shown and
 *   whose others have crossed nothing; its last shown axle has crossed the first detector only
 *   (it cannot go further while an axle behind it has not). Its next axle crossing the first
 *   detector *reveals* one more axle ({@link MOVE_REVEAL}); a move that only a train of exactly
 *   `m` axles can make (its last axle going on, or a train arriving behind it) *closes* it
 *   ({@link MOVE_CLOSE}). Every property reads the same on all the trains an open one stands
 *   for; `no-stuck-train` tracks them apart (properties.ts).
 *
 * ## Move codes
 * arrivals (group, axles; a fused arrival has axles 1) | axle crossings (group, slot, axle, route
 * fixed at this crossing or 0) | quiet firings (rule) | points reports (points, position).
 */
import type { EngineFacts } from "./abstraction";
import type { Model } from "./model";

export interface Packing {
  width: number;
  /** Offset of each group's block. */
  base: number[];
  slotWidth: number;
  /** Offset of each group's stream byte (lazy split: axles past the first detector whose trains are not told apart; else 0). */
  stream: number[];
}

export function packing(model: Model): Packing {
  const slotWidth = 3 + model.maxAxles;
  const base: number[] = [];
  const stream: number[] = [];
  let width = 0;
  for (let g = 0; g < model.groups.length; g++) {
    base.push(width);
    width += 1 + model.maxTrains * slotWidth;
    stream.push(width);
    width += 1;
  }
  return { width, base, slotWidth, stream };
}

/** Offsets into a slot. */
export const SLOT_AXLES = 0;
export const SLOT_ROUTE = 1;
export const SLOT_OPEN = 2;
export const SLOT_POS = 3;
/** "No train ahead" in the ahead-has-cleared test. */
const NONE_AHEAD = 255;

export const MOVE_ARRIVAL = 1;
/** The leading axle crossed entry with the points lying for no route of its group (§5: the branch ends). */
export const MOVE_MISROUTED = 2;
/** Power-worked points start to move under a train or a cleared signal (`points-locked` fails). */
export const MOVE_UNLOCKED = 4;
/** Reduced environment: an arrival together with its leading axle crossing the first detector (two §5 moves). */
export const MOVE_FUSED = 8;
/** Reduced environment: the move reveals one more axle of an open train (in group `flags >> MOVE_GROUP_SHIFT`). */
export const MOVE_REVEAL = 16;
/** Reduced environment: the move closes an open train (in group `flags >> MOVE_GROUP_SHIFT`) at its shown axles. */
export const MOVE_CLOSE = 32;
export const MOVE_GROUP_SHIFT = 8;
/** Lazy split: the front of a stream crosses entry as a train of the axles the code names (one branch of the split). */
export const MOVE_SPLIT = 64;
/** Lazy split: that train is open (it may have more axles than the stream held). */
export const MOVE_SPLIT_OPEN = 128;
/** Lazy split: the route choice of a split (index in its group) sits at this shift of the flags. */
export const MOVE_CHOICE_SHIFT = 16;

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

/**
 * How far the trains still have to go: per train, the detectors each shown axle has yet to
 * cross, plus `maxAxles − shown` whole paths for an open train's hidden axles (a train whose
 * route is not fixed counts its group's longest path). Every pulse and every reveal lowers it
 * (a reveal adds an axle one detector in but takes a whole path from the hidden ones), fixing a
 * route can only lower it, and a train leaves only from 1; quiet firings and points moves leave
 * it as it is. `no-stuck-train` orders its pass by it (stuck.ts).
 */
export function remainingProgress(model: Model, pack: Packing, cur: Uint8Array): number {
  const { base, slotWidth } = pack;
  let left = 0;
  for (const group of model.groups) {
    const b = base[group.index];
    let longest = 0;
    for (const r of group.routes) longest = Math.max(longest, model.routes[r].path.length);
    for (let t = 0; t < cur[b]; t++) {
      const slot = b + 1 + t * slotWidth;
      const tag = cur[slot + SLOT_ROUTE];
      const length = tag === 0 ? longest : model.routes[group.routes[tag - 1]].path.length;
      const axles = cur[slot + SLOT_AXLES];
      for (let k = 0; k < axles; k++) left += length - cur[slot + SLOT_POS + k];
      if (cur[slot + SLOT_OPEN] !== 0) left += (model.maxAxles - axles) * length;
    }
  }
  return left;
}

/** Axles in all groups' streams (lazy split; 0 otherwise). */
export function streamAxles(pack: Packing, cur: Uint8Array): number {
  let n = 0;
  for (const at of pack.stream) n += cur[at];
  return n;
}

/** Which environment {@link forEachMove} enumerates (module notes). */
export type Reduction = 0 | 1 | 2 | 3;
export const PLAIN = 0;
export const LAZY_ARRIVAL = 1;
export const LAZY_LENGTH = 2;
export const LAZY_SPLIT = 3;

/** Receives one move: its code, the engine input it gives (-1: none) and MOVE_* flags; `nxt` holds the trains after it. */
export type MoveVisitor = (code: number, input: number, flags: number) => void;

/**
 * Every move of the environment from the state (engine facts, trains `cur`), in a fixed order:
 * for each group its arrivals then its axle crossings, then quiet firings, then points moves.
 * Before each call of `visit`, `nxt` is filled with the trains after the move (for a misrouted
 * crossing, which has no successor, with the trains as they were). `level` selects the
 * environment: {@link PLAIN} (§5 as written), {@link LAZY_ARRIVAL}, {@link LAZY_LENGTH} or
 * {@link LAZY_SPLIT} (the reductions of the module notes). With lazy split, `defer` (bit per
 * group, deferral.ts) leaves out the stream axles those groups may defer.
 */
export function forEachMove(
  model: Model,
  pack: Packing,
  codes: MoveCodes,
  facts: EngineFacts,
  cur: Uint8Array,
  nxt: Uint8Array,
  visit: MoveVisitor,
  level: Reduction = PLAIN,
  defer = 0,
): void {
  for (let g = 0; g < model.groups.length; g++) groupMoves(model, pack, codes, facts, cur, nxt, visit, level, g, defer);
  const points = facts.powerMoves.length > 0 || facts.handMoves.length > 0;
  sharedMoves(model, codes, facts, points ? betweenMask(model, pack, cur) : 0, visit, cur, nxt);
}

/** The move `code` from (facts, trains `cur`): its input, flags and the trains after it (throws when it is none of the state's moves). */
export function findMove(
  model: Model,
  pack: Packing,
  codes: MoveCodes,
  facts: EngineFacts,
  cur: Uint8Array,
  code: number,
  level: Reduction,
): { input: number; flags: number; after: Uint8Array } {
  const nxt = new Uint8Array(pack.width);
  let found: { input: number; flags: number; after: Uint8Array } | undefined;
  forEachMove(
    model,
    pack,
    codes,
    facts,
    cur,
    nxt,
    (c, input, flags) => {
      if (c === code && found === undefined) found = { input, flags, after: nxt.slice() };
    },
    level,
  );
  if (!found) throw new Error(`move code ${code} is not a move of this state`);
  return found;
}

/**
 * The moves of group `g`'s trains: they read only the group's own block of `cur` and, of the
 * engine, whether its signal shows a proceed and which of its routes are set; `nxt` differs from
 * `cur` only in that block.
 */
export function groupMoves(
  model: Model,
  pack: Packing,
  codes: MoveCodes,
  facts: EngineFacts,
  cur: Uint8Array,
  nxt: Uint8Array,
  visit: MoveVisitor,
  level: Reduction,
  g: number,
  defer = 0,
): void {
  const { maxAxles, maxTrains, groups, routes } = model;
  const { base, slotWidth } = pack;
  const proceedMask = facts.proceedMask;
  const group = groups[g];
  const b = base[g];
  const n = cur[b];
  const groupFlag = g << MOVE_GROUP_SHIFT;
  const first = routes[group.routes[0]];
  if (n < maxTrains && level === PLAIN) {
    // A train arrives at the back of the group's queue.
    for (let a = 1; a <= maxAxles; a++) {
      nxt.set(cur);
      nxt[b] = n + 1;
      nxt[b + 1 + n * slotWidth + SLOT_AXLES] = a;
      visit(g * maxAxles + (a - 1), -1, MOVE_ARRIVAL);
    }
  } else if (level === LAZY_SPLIT) {
    streamMoves(model, pack, codes, facts, cur, nxt, visit, g, (defer & (1 << g)) !== 0);
  } else if (n < maxTrains && (n === 0 || lastAxle(cur, b + 1 + (n - 1) * slotWidth) > 0)) {
    // Lazy arrival: the new train's leading axle crosses the first detector at once (the train
    // ahead has cleared it). With lazy length it is one open train, and a train ahead that was
    // open is closed; otherwise one train of each length.
    const slot = b + 1 + n * slotWidth;
    const open = level === LAZY_LENGTH && maxAxles > 1;
    let flags = MOVE_ARRIVAL | MOVE_FUSED;
    if (n > 0 && cur[slot - slotWidth + SLOT_OPEN] !== 0) flags |= MOVE_CLOSE | groupFlag;
    for (let a = 1; a <= (open ? 1 : maxAxles); a++) {
      nxt.set(cur);
      if (n > 0) nxt[slot - slotWidth + SLOT_OPEN] = 0;
      nxt[b] = n + 1;
      nxt[slot + SLOT_AXLES] = a;
      nxt[slot + SLOT_OPEN] = open ? 1 : 0;
      nxt[slot + SLOT_POS] = 1;
      visit(g * maxAxles + (a - 1), first.pathInput[0], flags);
    }
  }
  const entry = group.entryIndex;
  const proceed = (proceedMask & (1 << group.routes[0])) !== 0;
  for (let t = 0; t < n; t++) {
    const slot = b + 1 + t * slotWidth;
    const axles = cur[slot + SLOT_AXLES];
    const tag = cur[slot + SLOT_ROUTE];
    const open = cur[slot + SLOT_OPEN] !== 0;
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
    const route = tag === 0 ? first : routes[group.routes[tag - 1]];
    // An unfixed train's path ends at entry: crossing it fixes the route.
    const length = tag === 0 ? entry + 1 : route.path.length;
    for (let k = 0; k < axles; k++) {
      const p = cur[slot + SLOT_POS + k];
      const ahead = p <= entry ? aheadShared : aheadOwn;
      if (!axleMayCross(cur, slot, k, length, ahead, entry, proceed)) continue;
      const input = route.pathInput[p];
      const code = codes.pulseBase + ((g * maxTrains + t) * maxAxles + k) * codes.choices;
      // The last shown axle of an open train goes on: only a train of exactly these axles can.
      const closes = open && k === axles - 1;
      const flags = closes ? MOVE_CLOSE | groupFlag : 0;
      if (tag === 0 && k === 0 && p === entry) {
        // §5: the route is the one of the group whose points all lie as reported now.
        const matching = group.routeMask & facts.routesSetMask;
        if (matching === 0) {
          nxt.set(cur);
          visit(code, input, MOVE_MISROUTED | flags);
          continue;
        }
        for (let c = 0; c < group.routes.length; c++) {
          if ((matching & (1 << group.routes[c])) === 0) continue;
          nxt.set(cur);
          nxt[slot + SLOT_POS] = p + 1;
          nxt[slot + SLOT_ROUTE] = c + 1;
          if (closes) nxt[slot + SLOT_OPEN] = 0;
          visit(code + c + 1, input, flags);
        }
        continue;
      }
      nxt.set(cur);
      nxt[slot + SLOT_POS + k] = p + 1;
      if (closes) nxt[slot + SLOT_OPEN] = 0;
      if (k === axles - 1 && p + 1 === length) {
        // The last axle crossed the last exit: the train leaves; the trains behind move up.
        nxt.copyWithin(slot, slot + slotWidth, b + 1 + maxTrains * slotWidth);
        nxt.fill(0, b + 1 + (maxTrains - 1) * slotWidth, b + 1 + maxTrains * slotWidth);
        nxt[b] = n - 1;
      }
      visit(code, input, flags);
    }
    if (open) {
      // One more axle of an open train crosses the first detector (the one ahead has).
      nxt.set(cur);
      nxt[slot + SLOT_AXLES] = axles + 1;
      nxt[slot + SLOT_POS + axles] = 1;
      nxt[slot + SLOT_OPEN] = axles + 1 < maxAxles ? 1 : 0;
      visit(codes.pulseBase + ((g * maxTrains + t) * maxAxles + axles) * codes.choices, route.pathInput[0], MOVE_REVEAL | groupFlag);
    }
  }
}

/**
 * The moves of no train: an armed quiet trigger fires, points move. `under` is
 * {@link betweenMask} of the trains. When `cur` and `nxt` are given, `nxt` is set to `cur`
 * before each visit (the trains do not change).
 */
export function sharedMoves(model: Model, codes: MoveCodes, facts: EngineFacts, under: number, visit: MoveVisitor, cur?: Uint8Array, nxt?: Uint8Array): void {
  const proceedMask = facts.proceedMask;
  // An armed quiet trigger fires (at any time: the prover does not trust timing).
  const firstQuiet = model.pointsBase - model.quietRuleIds.length;
  for (const input of facts.armed) {
    if (cur && nxt) nxt.set(cur);
    visit(codes.quietBase + (input - firstQuiet), input, 0);
  }
  // Points move: power-worked towards where last thrown, hand-worked while nothing is under them.
  if (facts.powerMoves.length === 0 && facts.handMoves.length === 0) return;
  for (const move of facts.powerMoves) {
    const neededBy = model.points[move.points].neededBy;
    const unlocked = move.starting && ((under | proceedMask) & neededBy) !== 0;
    if (cur && nxt) nxt.set(cur);
    visit(codes.pointsBase + (move.input - model.pointsBase), move.input, unlocked ? MOVE_UNLOCKED : 0);
  }
  for (const move of facts.handMoves) {
    if ((under & model.points[move.points].neededBy) !== 0) continue;
    if (cur && nxt) nxt.set(cur);
    visit(codes.pointsBase + (move.input - model.pointsBase), move.input, 0);
  }
}

/**
 * Lazy split (module notes): the moves of group `g`'s stream — `N` axles past the first detector
 * (the only approach detector) whose division into trains is not yet told. Its trains stand for
 * every division into at most the group's free train places of at most `maxAxles` axles each.
 * - One more axle crosses the first detector (a reveal or an arrival: the stream does not say
 *   which). The first axle of a stream is an arrival, and closes an open train ahead.
 * - The front crosses entry while the signal shows a proceed and the train ahead has cleared it:
 *   that decides the front train's length `j` — one branch per `j` (`MOVE_SPLIT`), the last one
 *   open when it takes the whole stream ({@link MOVE_SPLIT_OPEN}). The rest stays a stream.
 * Prices (the search's depth): a stream of `N` axles is taken to hold the fewest trains it can,
 * `⌈N/maxAxles⌉`, each an arrival worth one move more; a move that needs one more train than that
 * is worth two ({@link MOVE_FUSED}). So every state is at the depth of the shortest §5 run to any
 * of the states it stands for, and a path's price is that of a §5 run (moves.ts decodes it).
 * `deferred`: one more axle of a non-empty stream is taken only while the front may cross entry
 * (deferral.ts).
 */
function streamMoves(
  model: Model,
  pack: Packing,
  codes: MoveCodes,
  facts: EngineFacts,
  cur: Uint8Array,
  nxt: Uint8Array,
  visit: MoveVisitor,
  g: number,
  deferred: boolean,
): void {
  const { maxAxles: B, maxTrains, groups, routes } = model;
  const { base, slotWidth } = pack;
  const group = groups[g];
  const b = base[g];
  const at = pack.stream[g];
  const n = cur[b];
  const N = cur[at];
  const free = maxTrains - n;
  const first = routes[group.routes[0]];
  const groupFlag = g << MOVE_GROUP_SHIFT;
  const lastSlot = b + 1 + (n - 1) * slotWidth;
  if (N === 0) {
    if (free > 0 && (n === 0 || lastAxle(cur, lastSlot) > 0)) {
      let flags = MOVE_ARRIVAL | MOVE_FUSED;
      nxt.set(cur);
      if (n > 0 && cur[lastSlot + SLOT_OPEN] !== 0) {
        flags |= MOVE_CLOSE | groupFlag;
        nxt[lastSlot + SLOT_OPEN] = 0;
      }
      nxt[at] = 1;
      visit(g * B, first.pathInput[0], flags);
    }
    return;
  }
  const entry = group.entryIndex;
  // The front may cross entry: the signal shows a proceed and the train ahead has cleared entry.
  const ready = (facts.proceedMask & (1 << group.routes[0])) !== 0 && (n === 0 || lastAxle(cur, lastSlot) > entry);
  if (N + 1 <= free * B && (ready || !deferred)) {
    nxt.set(cur);
    nxt[at] = N + 1;
    visit(g * B, first.pathInput[0], MOVE_ARRIVAL | (Math.ceil((N + 1) / B) > Math.ceil(N / B) ? MOVE_FUSED : 0));
  }
  if (!ready) return;
  const input = first.pathInput[entry];
  const slotCode = codes.pulseBase + (g * maxTrains + n) * B * codes.choices;
  const matching = group.routeMask & facts.routesSetMask;
  if (matching === 0) {
    nxt.set(cur);
    visit(slotCode, input, MOVE_MISROUTED);
    return;
  }
  const slot = b + 1 + n * slotWidth;
  for (let c = 0; c < group.routes.length; c++) {
    if ((matching & (1 << group.routes[c])) === 0) continue;
    // j < N: closed at j, the rest a stream; j = N: the whole stream, open while it may grow.
    // A one-axle stream enters only as a one-axle train (the axle behind has not crossed the first detector).
    for (let j = 1; j <= Math.min(N, B); j++) {
      const rest = N - j;
      if (rest > (free - 1) * B) continue;
      const open = j === N && N > 1 && N < B;
      nxt.set(cur);
      nxt[b] = n + 1;
      nxt[at] = rest;
      nxt[slot + SLOT_AXLES] = j;
      nxt[slot + SLOT_ROUTE] = c + 1;
      nxt[slot + SLOT_OPEN] = open ? 1 : 0;
      nxt[slot + SLOT_POS] = entry + 1;
      for (let k = 1; k < j; k++) nxt[slot + SLOT_POS + k] = entry;
      const extra = 1 + Math.ceil(rest / B) - Math.ceil(N / B);
      let flags = MOVE_SPLIT | groupFlag | (c << MOVE_CHOICE_SHIFT) | (extra > 0 ? MOVE_FUSED : 0);
      if (open) flags |= MOVE_SPLIT_OPEN;
      visit(slotCode + (j - 1) * codes.choices + c + 1, input, flags);
    }
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
