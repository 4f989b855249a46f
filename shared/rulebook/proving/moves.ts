/**
 * Counterexample moves as CONTRACT.md §5 writes them, and their decoding from move codes.
 * Decoding enumerates the moves of each state on the path through `forEachMove`, so a move
 * means exactly what the search meant by it.
 */
import type { EngineFacts } from "./abstraction";
import { forEachMove, SLOT_ROUTE, type MoveCodes, type Packing } from "./environment";
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
 * The §5 move a code stands for, taken from `from`, and the trains after it. The route of a
 * pulse is the train's fixed route, or its group's first route until it is fixed (the crossing
 * that fixes it names the route taken).
 */
export function describeMove(
  model: Model,
  pack: Packing,
  codes: MoveCodes,
  step: PathStep,
  numbers: TrainNumbers,
): { move: Move; after: Uint8Array; input: number } {
  const cur = step.trains;
  const nxt = new Uint8Array(pack.width);
  let found: { input: number; after: Uint8Array } | undefined;
  forEachMove(model, pack, codes, step.facts, cur, nxt, (code, input) => {
    if (code === step.code && found === undefined) found = { input, after: nxt.slice() };
  });
  if (!found) throw new Error(`move code ${step.code} is not a move of this state`);
  const { input, after } = found;
  const c = step.code;
  if (c < codes.pulseBase) {
    const group = Math.floor(c / model.maxAxles);
    numbers.arrive(group);
    return { move: { type: "arrive", route: model.routes[model.groups[group].routes[0]].id, axles: (c % model.maxAxles) + 1 }, after, input };
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
    const detector = (model.inputs[input] as { detector: string }).detector;
    return { move: { type: "pulse", detector, route: route.id, train }, after, input };
  }
  if (c < codes.pointsBase) return { move: { type: "quiet", rule: model.quietRuleIds[c - codes.quietBase] }, after, input };
  const p = Math.floor((c - codes.pointsBase) / 3);
  return { move: { type: "points", points: model.points[p].id, lies: REPORTED_LIES[(c - codes.pointsBase) % 3] }, after, input };
}
