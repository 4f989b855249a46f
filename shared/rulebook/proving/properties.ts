/**
 * The properties of CONTRACT.md §5: their ids and words, and what a single state says about
 * them (on packed trains, used by the search and the replay alike). `no-stuck-train`, which is
 * decided once the search is done, is in `stuck.ts`.
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
    // Lazy split: a stream's front train has crossed the only approach detector, so it waits.
    if (cur[pack.stream[g]] > 0) {
      if (!signalProceeds) {
        waitMask |= 1 << g;
        if (g === priorityGroup) priorityWaits = true;
      }
      if (g !== priorityGroup) othersAway = false;
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
