/**
 * Counterexamples of the lazy-split search (environment.ts, "lazy split") as §5 moves. A path
 * of that search does not say, as a stream's axles cross the first detector, which train each
 * belongs to: a split says it later for the front train, and whatever is still a stream at the
 * end is divided into the fewest trains it can be (the division the path was priced at). So the
 * path is first read into events, each axle crossing tied to a train once that is known, then
 * written out with each train's `arrive` just before its first crossing and trains numbered in
 * order of arrival.
 */
import { findMove, LAZY_SPLIT, MOVE_REVEAL, MOVE_SPLIT, type MoveCodes, type Packing } from "./environment";
import { REPORTED_LIES, type Model } from "./model";
import type { Move, PathStep } from "./moves";

/** A train of the counterexample: its group, route once fixed, and its axles. */
interface Train {
  group: number;
  route?: string;
  axles: number;
  /** Index in `events` of its first crossing. */
  first: number;
  number?: number;
}

/** An axle crossing (train known or still in a stream), or a move of no train. */
type Event = { pulse: string; train: Train | null; group: number; routeFixed: boolean } | { other: Move };

export function decodeSplitPath(model: Model, pack: Packing, codes: MoveCodes, steps: PathStep[]): Move[] {
  const events: Event[] = [];
  /** Per group: the events of its stream's axles, front first, not yet tied to a train. */
  const streams: number[][] = model.groups.map(() => []);
  /** Per group: the trains in its slots, front first (as the packing keeps them). */
  const slots: Train[][] = model.groups.map(() => []);
  const trains: Train[] = [];
  const detectorOf = (i: number): string => (model.inputs[i] as { detector: string }).detector;
  const tie = (group: number, count: number, route: string | undefined): Train => {
    const ids = streams[group].splice(0, count);
    const train: Train = { group, route, axles: count, first: ids[0] };
    for (const i of ids) (events[i] as { train: Train | null }).train = train;
    trains.push(train);
    return train;
  };

  for (const step of steps) {
    const found = findMove(model, pack, codes, step.facts, step.trains, step.code, LAZY_SPLIT);
    const c = step.code;
    if (c < codes.pulseBase) {
      // One more axle of the group's stream crosses the first detector.
      const group = Math.floor(c / model.maxAxles);
      streams[group].push(events.length);
      events.push({ pulse: detectorOf(found.input), train: null, group, routeFixed: false });
      continue;
    }
    if (c >= codes.quietBase) {
      if (c < codes.pointsBase) events.push({ other: { type: "quiet", rule: model.quietRuleIds[c - codes.quietBase] } });
      else {
        const p = Math.floor((c - codes.pointsBase) / 3);
        events.push({ other: { type: "points", points: model.points[p].id, lies: REPORTED_LIES[(c - codes.pointsBase) % 3] } });
      }
      continue;
    }
    const rest = Math.floor((c - codes.pulseBase) / codes.choices);
    const choice = (c - codes.pulseBase) % codes.choices;
    const axle = rest % model.maxAxles;
    const slot = Math.floor(rest / model.maxAxles) % model.maxTrains;
    const g = Math.floor(rest / (model.maxAxles * model.maxTrains));
    const group = model.groups[g];
    if ((found.flags & MOVE_SPLIT) !== 0) {
      // The stream's front enters as a train of `axle + 1` axles (all the stream's, when open).
      const route = model.routes[group.routes[choice - 1]].id;
      const train = tie(g, axle + 1, route);
      slots[g].push(train);
      events.push({ pulse: detectorOf(found.input), train, group: g, routeFixed: true });
      continue;
    }
    if (choice === 0 && slot === slots[g].length) {
      // The stream's front enters with the points lying for none of its routes (the last move).
      const front = tie(g, Math.min(streams[g].length, model.maxAxles), undefined);
      events.push({ pulse: detectorOf(found.input), train: front, group: g, routeFixed: false });
      continue;
    }
    const train = slots[g][slot];
    if ((found.flags & MOVE_REVEAL) !== 0) train.axles++;
    events.push({ pulse: detectorOf(found.input), train, group: g, routeFixed: true });
    if (found.after[pack.base[g]] < step.trains[pack.base[g]]) slots[g].splice(slot, 1);
  }
  // What is still a stream: the fewest trains, front first.
  for (const group of model.groups) {
    while (streams[group.index].length > 0) tie(group.index, Math.min(streams[group.index].length, model.maxAxles), undefined);
  }

  trains.sort((a, b) => a.first - b.first);
  trains.forEach((t, i) => (t.number = i + 1));
  const out: Move[] = [];
  events.forEach((e, i) => {
    if ("other" in e) {
      out.push(e.other);
      return;
    }
    const train = e.train!;
    const firstRoute = model.routes[model.groups[e.group].routes[0]].id;
    if (train.first === i) out.push({ type: "arrive", route: firstRoute, axles: train.axles });
    out.push({ type: "pulse", detector: e.pulse, route: e.routeFixed && train.route ? train.route : firstRoute, train: train.number! });
  });
  return out;
}
