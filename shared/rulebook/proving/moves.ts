/**
 * Counterexample moves as CONTRACT.md §5 writes them, and their decoding from move codes.
 * Decoding enumerates the moves of each state on the path through `forEachMove`, so a move
 * means exactly what the search meant by it.
 */
import type { EngineFacts } from "./abstraction";
import { findMove, MOVE_FUSED, MOVE_REVEAL, PLAIN, SLOT_OPEN, SLOT_ROUTE, type MoveCodes, type Packing, type Reduction } from "./environment";
import { REPORTED_LIES, type Model } from "./model";
import type { PointsLie } from "../schema";

/** One move of a counterexample (CONTRACT.md §5). Trains are numbered from 1 in order of arrival. */
export type Move =
  | { type: "arrive"; route: string; axles: number }
  | { type: "pulse"; detector: string; route: string; train: number }
  | { type: "quiet"; rule: string }
  | { type: "points"; points: string; lies: PointsLie };

/** One step of a path: the state it leaves (engine facts, packed trains) and the move code taken. */
export interface PathStep {
  facts: EngineFacts;
  trains: Uint8Array;
  code: number;
}

/**
 * Train numbers per group slot, kept in step with packed trains: arrivals take the next number,
 * a train that leaves frees its slot and the trains behind move up (as in the packing).
 */
export class TrainNumbers {
  private slots: number[][];
  private arrivals = 0;
  constructor(model: Model) {
    this.slots = model.groups.map(() => []);
  }
  arrive(group: number): number {
    this.slots[group].push(++this.arrivals);
    return this.arrivals;
  }
  of(group: number, slot: number): number {
    return this.slots[group][slot];
  }
  leave(group: number, slot: number): void {
    this.slots[group].splice(slot, 1);
  }
  count(group: number): number {
    return this.slots[group].length;
  }
  clone(): TrainNumbers {
    const copy = Object.create(TrainNumbers.prototype) as TrainNumbers;
    copy.slots = this.slots.map((s) => [...s]);
    copy.arrivals = this.arrivals;
    return copy;
  }
}

/**
 * The §5 moves a code stands for, taken from `from` (one, or two for a fused arrival of the
 * reduced environment: the arrival and its first pulse), and the trains after it. The route of
 * a pulse is the train's fixed route, or its group's first route until it is fixed (the crossing
 * that fixes it names the route taken). `train` is the number of the train that moved or arrived.
 * With lazy length the axle count of a fused arrival is not known yet (the train is open): it is
 * given as 1 and {@link decodePath} puts in the count the path settles on.
 */
export function describeMove(
  model: Model,
  pack: Packing,
  codes: MoveCodes,
  step: PathStep,
  numbers: TrainNumbers,
  level: Reduction = PLAIN,
): { moves: Move[]; after: Uint8Array; input: number; flags: number; train: number } {
  const cur = step.trains;
  const found = findMove(model, pack, codes, step.facts, cur, step.code, level);
  const { input, after, flags } = found;
  const c = step.code;
  const detectorOf = (i: number): string => (model.inputs[i] as { detector: string }).detector;
  if (c < codes.pulseBase) {
    const group = Math.floor(c / model.maxAxles);
    const route = model.routes[model.groups[group].routes[0]].id;
    const train = numbers.arrive(group);
    const arrive: Move = { type: "arrive", route, axles: (c % model.maxAxles) + 1 };
    if ((flags & MOVE_FUSED) === 0) return { moves: [arrive], after, input, flags, train };
    return { moves: [arrive, { type: "pulse", detector: detectorOf(input), route, train }], after, input, flags, train };
  }
  if (c < codes.quietBase) {
    const rest = Math.floor((c - codes.pulseBase) / codes.choices);
    const slot = Math.floor(rest / model.maxAxles) % model.maxTrains;
    const group = model.groups[Math.floor(rest / (model.maxAxles * model.maxTrains))];
    const offset = pack.base[group.index] + 1 + slot * pack.slotWidth;
    const leaves = after[pack.base[group.index]] < cur[pack.base[group.index]];
    const tag = leaves ? cur[offset + SLOT_ROUTE] : after[offset + SLOT_ROUTE];
    const route = model.routes[group.routes[Math.max(0, tag - 1)]];
    const train = numbers.of(group.index, slot);
    if (leaves) numbers.leave(group.index, slot);
    return { moves: [{ type: "pulse", detector: detectorOf(input), route: route.id, train }], after, input, flags, train };
  }
  if (c < codes.pointsBase) return { moves: [{ type: "quiet", rule: model.quietRuleIds[c - codes.quietBase] }], after, input, flags, train: 0 };
  const p = Math.floor((c - codes.pointsBase) / 3);
  return { moves: [{ type: "points", points: model.points[p].id, lies: REPORTED_LIES[(c - codes.pointsBase) % 3] }], after, input, flags, train: 0 };
}

/**
 * The §5 moves of a path of the search. In the reduced environment a train's axle count is
 * only settled along the way (each revealed axle adds one): its arrival gets the count the path
 * ends with, plus `extraAxles(group)` for a train still open at the end (for `no-stuck-train`,
 * the length of the train it stands for that is stuck; otherwise 0: the shortest will do).
 */
export function decodePath(
  model: Model,
  pack: Packing,
  codes: MoveCodes,
  steps: PathStep[],
  level: Reduction,
  extraAxles: (group: number) => number = () => 0,
): Move[] {
  const numbers = new TrainNumbers(model);
  const out: Move[] = [];
  const arrivalOf = new Map<number, { type: "arrive"; route: string; axles: number }>();
  let last: Uint8Array | undefined;
  for (const step of steps) {
    const d = describeMove(model, pack, codes, step, numbers, level);
    if ((d.flags & MOVE_FUSED) !== 0) arrivalOf.set(d.train, d.moves[0] as { type: "arrive"; route: string; axles: number });
    if ((d.flags & MOVE_REVEAL) !== 0) arrivalOf.get(d.train)!.axles++;
    out.push(...d.moves);
    last = d.after;
  }
  if (last) {
    // Trains still open at the end of the path: the length of the train they stand for.
    for (const group of model.groups) {
      for (let t = 0; t < last[pack.base[group.index]]; t++) {
        const slot = pack.base[group.index] + 1 + t * pack.slotWidth;
        if (last[slot + SLOT_OPEN] !== 0) arrivalOf.get(numbers.of(group.index, t))!.axles += extraAxles(group.index);
      }
    }
  }
  return out;
}
