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
 * What one group's block of packed trains says, whatever the engine shows: the parts the state
 * properties are made of ({@link combineGroups}). A train *occupies* its route's section from its
 * leading axle crossing entry (when its route is fixed) until it leaves; it *waits at its signal*
 * (when that shows danger) once its leading axle has crossed every approach detector but not entry.
 */
export interface GroupSummary {
  /** A train of the group has crossed every approach detector but not entry. */
  atSignal: boolean;
  /** Bits of the routes whose sections the group's trains occupy. */
  occupied: number;
  /** Bits of those routes and of every route they conflict with. */
  conflicts: number;
  /** Two of the group's trains occupy sections of the same or conflicting routes. */
  overlap: boolean;
  /** A train of the group has crossed its first approach detector. */
  crossed: boolean;
}

/** Fills `out` (a fresh summary by default) with group g's summary of `cur`. */
export function summariseGroup(model: Model, pack: env.Packing, cur: Uint8Array, g: number, out: GroupSummary = emptySummary()): GroupSummary {
  const { base, slotWidth } = pack;
  const group = model.groups[g];
  const n = cur[base[g]];
  out.atSignal = false;
  out.occupied = 0;
  out.conflicts = 0;
  out.overlap = false;
  out.crossed = false;
  for (let t = 0; t < n; t++) {
    const slot = base[g] + 1 + t * slotWidth;
    const lead = cur[slot + SLOT_POS];
    const tag = cur[slot + SLOT_ROUTE];
    if (tag !== 0) {
      // Fixed route ⇔ the leading axle has crossed entry: the train occupies the section.
      const r = group.routes[tag - 1];
      if ((out.conflicts & (1 << r)) !== 0) out.overlap = true;
      out.occupied |= 1 << r;
      out.conflicts |= (1 << r) | model.routes[r].conflictMask;
    } else if (lead === group.entryIndex) out.atSignal = true;
    if (lead > 0) out.crossed = true;
  }
  // Lazy split: a stream's front train has crossed the only approach detector.
  if (cur[pack.stream[g]] > 0) {
    out.atSignal = true;
    out.crossed = true;
  }
  return out;
}

/**
 * The state properties from the groups' summaries and the engine's facts. `priority-unhindered`
 * is broken when a train of the priority route's group waits at a danger signal, no section is
 * occupied and no other group has a train past its first approach detector.
 */
export function combineGroups(model: Model, facts: EngineFacts, summary: (g: number) => GroupSummary): StateVerdict {
  const proceed = facts.proceedMask;
  const priorityGroup = model.priority >= 0 ? model.routes[model.priority].group : -1;
  let waitMask = 0;
  let overlap = false;
  let conflicts = 0;
  let anyOccupied = false;
  let othersAway = true;
  for (const group of model.groups) {
    const g = group.index;
    const s = summary(g);
    if (s.atSignal && (proceed & (1 << group.routes[0])) === 0) waitMask |= 1 << g;
    if (s.overlap || (s.occupied & conflicts) !== 0) overlap = true;
    conflicts |= s.conflicts;
    if (s.occupied !== 0) anyOccupied = true;
    if (g !== priorityGroup && s.crossed) othersAway = false;
  }
  const priorityWaits = priorityGroup >= 0 && (waitMask & (1 << priorityGroup)) !== 0;
  const priorityHindered = priorityWaits && !anyOccupied && othersAway && (proceed & (1 << model.priority)) === 0;
  return { waitMask, overlap, priorityHindered };
}

function emptySummary(): GroupSummary {
  return { atSignal: false, occupied: 0, conflicts: 0, overlap: false, crossed: false };
}

/** One summary filled for each group in turn (the search calls this for every state). */
const scratch = emptySummary();

/** Reads the state properties off a state (packed trains). */
export function judgeState(model: Model, pack: env.Packing, facts: EngineFacts, cur: Uint8Array): StateVerdict {
  return combineGroups(model, facts, (g) => summariseGroup(model, pack, cur, g, scratch));
}

/** Axles of a packed slot, for views: the number of detectors each axle has crossed. */
export function slotPositions(cur: Uint8Array, slot: number): number[] {
  const out: number[] = [];
  for (let k = 0; k < cur[slot + SLOT_AXLES]; k++) out.push(cur[slot + SLOT_POS + k]);
  return out;
}
