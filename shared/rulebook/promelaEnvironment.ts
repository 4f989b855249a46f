/**
 * The §5 environment in Promela, for `promela.ts`: trains on facing groups, the route fixed
 * when a train's leading axle crosses entry, points moved by the environment, and the property
 * asserts. Written from CONTRACT.md §5 directly (it shares no code with the prover's
 * `proving/environment.ts`), so SPIN agreeing with `prove` is evidence about both.
 */
import type { Proving } from "./schema";

/** Codes of where points lie as reported; the environment reports only these three. */
export const REPORT_CODE = { normal: 1, reverse: 2, moving: 3 } as const;

/** Routes with the same signal, approach and entry: they share that part of the path (§5). */
export interface FacingGroup {
  signal: string;
  /** Index of `entry` in every path of the group (= number of approach detectors). */
  entry: number;
  /** Route indices, in the order the routes are listed. */
  routes: number[];
}

export function facingGroups(proving: Proving): { groups: FacingGroup[]; groupOf: number[]; placeOf: number[] } {
  const groups: FacingGroup[] = [];
  const byKey = new Map<string, number>();
  const groupOf: number[] = [];
  const placeOf: number[] = [];
  proving.routes.forEach((r, ri) => {
    const key = JSON.stringify([r.signal, r.approach, r.entry]);
    let g = byKey.get(key);
    if (g === undefined) {
      g = groups.length;
      byKey.set(key, g);
      groups.push({ signal: r.signal, entry: r.approach.length, routes: [] });
    }
    groupOf.push(g);
    placeOf.push(groups[g].routes.length);
    groups[g].routes.push(ri);
  });
  return { groups, groupOf, placeOf };
}

export interface ModelledPoints {
  name: string;
  worked: "power" | "hand";
  /** Promela variables: where last reported, where last thrown (0 = never). */
  lie: string;
  thrown: string;
}

/** What the environment needs from the rulebook translation. */
export interface EnvironmentContext {
  P: string;
  emit: (line?: string) => void;
  proving: Proving;
  maxAxles: number;
  maxTrains: number;
  /** Promela expression: the signal shows something other than danger. */
  shownProceed: (signal: string) => string;
  /** Detector index of each detector id (= its input number). */
  detectorInput: (detector: string) => number;
  /** Input numbers: quiet rule i is `quietBase + i`; points p reported `c` is `pointsInput(p, c)`. */
  quietRuleIds: string[];
  quietBase: number;
  quietArmed: (ruleId: string) => string;
  points: ModelledPoints[];
  pointsInput: (p: number, code: number) => number;
  noInput: number;
  /** Emits an assert of `ok` for `property`, reported once. */
  assertOnce: (property: "no-conflicting-proceeds" | "one-train-per-section" | "points-set-for-train" | "points-locked", ok: string) => void;
  commentSafe: (text: string) => string;
}

/** Declares the trains of each facing group. */
export function emitTrainDeclarations(ctx: EnvironmentContext): void {
  const { P, emit, maxTrains, maxAxles } = ctx;
  const { groups } = facingGroups(ctx.proving);
  groups.forEach((g, gi) => {
    const ids = g.routes.map((ri) => ctx.commentSafe(ctx.proving.routes[ri].id)).join(", ");
    emit(`byte ${P}n_${gi}; /* trains on routes ${ids} */`);
    emit(`byte ${P}ax_${gi}[${maxTrains}]; /* axles of each train, front train first */`);
    emit(`byte ${P}rt_${gi}[${maxTrains}]; /* route of each train: 0 until fixed at entry, else 1 + its place in the group */`);
    emit(`byte ${P}pos_${gi}[${maxTrains * maxAxles}]; /* detectors crossed by each axle */`);
  });
}

/** Expressions over the trains, shared by the asserts and the moves. */
function trainTerms(ctx: EnvironmentContext) {
  const { P, proving, maxAxles, maxTrains } = ctx;
  const { groups, groupOf, placeOf } = facingGroups(proving);
  const pos = (g: number, t: number, k: number | string): string => `${P}pos_${g}[${typeof k === "number" ? t * maxAxles + k : `${t * maxAxles} + ${k}`}]`;
  const last = (g: number, t: number): string => pos(g, t, `${P}ax_${g}[${t}] - 1`);
  /** Trains in the section of route ri: its route is fixed (the leading axle crossed entry). */
  const occupied = (ri: number): string => {
    const g = groupOf[ri];
    const terms = Array.from({ length: maxTrains }, (_, t) => `((${P}n_${g} > ${t} && ${P}rt_${g}[${t}] == ${placeOf[ri] + 1}) -> 1 : 0)`);
    return `(${terms.join(" + ")})`;
  };
  /** A train of route ri is between its signal and its first exit detector (its last axle has not crossed it). */
  const under = (ri: number): string => {
    const g = groupOf[ri];
    const entry = groups[g].entry;
    const terms = Array.from({ length: maxTrains }, (_, t) => `(${P}n_${g} > ${t} && ${P}rt_${g}[${t}] == ${placeOf[ri] + 1} && ${last(g, t)} <= ${entry + 1})`);
    return `(${terms.join(" || ")})`;
  };
  /** Every points route ri needs lies as it needs them, as last reported. */
  const pointsSet = (ri: number): string => {
    const needs = Object.entries(proving.routes[ri].points ?? {});
    if (needs.length === 0) return "1";
    return `(${needs.map(([id, lies]) => `${ctx.points.find((p) => p.name === id)!.lie} == ${REPORT_CODE[lies]}`).join(" && ")})`;
  };
  return { groups, groupOf, placeOf, pos, last, occupied, under, pointsSet };
}

/** The `check()` inline's train properties (after every move). */
export function emitTrainAsserts(ctx: EnvironmentContext): void {
  const { proving } = ctx;
  const { occupied } = trainTerms(ctx);
  const routeIndex = new Map(proving.routes.map((r, i) => [r.id, i]));
  const { groups } = facingGroups(proving);
  for (const [a, b] of proving.conflicts ?? []) {
    const ra = proving.routes[routeIndex.get(a) ?? -1];
    const rb = proving.routes[routeIndex.get(b) ?? -1];
    if (!ra || !rb || ra === rb || ra.signal === rb.signal) continue;
    ctx.assertOnce("no-conflicting-proceeds", `!(${ctx.shownProceed(ra.signal)} && ${ctx.shownProceed(rb.signal)})`);
  }
  proving.routes.forEach((_, ri) => ctx.assertOnce("one-train-per-section", `${occupied(ri)} <= 1`));
  const pairs: [number, number][] = [];
  for (const [a, b] of proving.conflicts ?? []) {
    const ia = routeIndex.get(a) ?? -1;
    const ib = routeIndex.get(b) ?? -1;
    if (ia >= 0 && ib >= 0 && ia !== ib) pairs.push([ia, ib]);
  }
  // Routes of one facing group conflict with each other (§5).
  for (const g of groups) for (const a of g.routes) for (const b of g.routes) if (a < b) pairs.push([a, b]);
  for (const [ia, ib] of pairs) ctx.assertOnce("one-train-per-section", `!(${occupied(ia)} > 0 && ${occupied(ib)} > 0)`);
}

/**
 * The options of the main loop's `if`: each picks one move, updates the trains and sets `inp`
 * to the engine input it gives (`noInput` for an arrival). A misrouted crossing asserts
 * `points-set-for-train` and jumps to `endLabel`: §5 ends that branch.
 */
export function emitMoves(ctx: EnvironmentContext, endLabel: string): void {
  const { P, emit, proving, maxAxles, maxTrains, noInput } = ctx;
  const { groups, pos, last, under, pointsSet } = trainTerms(ctx);
  const routePoints = proving.routes.some((r) => Object.keys(r.points ?? {}).length > 0);
  groups.forEach((group, g) => {
    const entry = group.entry;
    const routes = group.routes.map((ri) => proving.routes[ri]);
    const paths = routes.map((r) => [...r.approach, r.entry, ...r.exit]);
    const ids = routes.map((r) => ctx.commentSafe(r.id)).join(", ");
    const proceed = ctx.shownProceed(group.signal);
    emit(`    /* routes ${ids}: a train arrives */`);
    emit(`    :: (${P}n_${g} < ${maxTrains}) -> if ${Array.from({ length: maxAxles }, (_, a) => `:: ${P}ax_${g}[${P}n_${g}] = ${a + 1}`).join(" ")} fi; ${P}n_${g}++; ${P}inp = ${noInput}`);
    for (let t = 0; t < maxTrains; t++) {
      const rt = `${P}rt_${g}[${t}]`;
      for (let k = 0; k < maxAxles; k++) {
        const p = pos(g, t, k);
        // The path ends at entry until the route is fixed, then at the route's last exit.
        const hasNext = [`(${rt} == 0 && ${p} <= ${entry})`, ...paths.map((path, c) => `(${rt} == ${c + 1} && ${p} < ${path.length})`)].join(" || ");
        const guards = [`${P}n_${g} > ${t}`, `${P}ax_${g}[${t}] > ${k}`, `(${hasNext})`];
        // the axle ahead has already crossed the detector
        if (k > 0) guards.push(`${pos(g, t, k - 1)} > ${p}`);
        // the axle behind has crossed the previous detector (it is level with this axle)
        if (k < maxAxles - 1) guards.push(`(${P}ax_${g}[${t}] <= ${k + 1} || ${pos(g, t, k + 1)} >= ${p})`);
        if (t > 0) {
          // Up to entry the train ahead in the group has cleared the detector; past it, the
          // nearest train ahead on the same route.
          guards.push(`(${p} > ${entry} || ${last(g, t - 1)} > ${p})`);
          const blocked: string[] = [];
          for (let u = t - 1; u >= 0; u--) {
            const between = Array.from({ length: t - 1 - u }, (_, i) => `${P}rt_${g}[${u + 1 + i}] != ${rt}`);
            blocked.push(`(${[`${P}rt_${g}[${u}] == ${rt}`, ...between, `${last(g, u)} <= ${p}`].join(" && ")})`);
          }
          guards.push(`(${p} <= ${entry} || !(${blocked.join(" || ")}))`);
        }
        // the leading axle crosses entry only while the signal shows non-danger
        if (k === 0) guards.push(`(${p} != ${entry} || ${proceed})`);
        const guard = guards.join(" && ");
        const atEntry = `${rt} == 0 && ${p} == ${entry}`;
        emit(`    /* routes ${ids}: axle ${k + 1} of train slot ${t + 1} crosses its next detector */`);
        emit(`    :: (${guard}${k === 0 ? ` && !(${atEntry})` : ""}) ->`);
        emit(`       if`);
        for (let i = 0; i <= entry; i++) emit(`       :: (${p} == ${i}) -> ${P}inp = ${ctx.detectorInput(paths[0][i])} /* ${paths[0][i]} */`);
        paths.forEach((path, c) => {
          for (let i = entry + 1; i < path.length; i++) emit(`       :: (${rt} == ${c + 1} && ${p} == ${i}) -> ${P}inp = ${ctx.detectorInput(path[i])} /* ${path[i]} */`);
        });
        emit(`       fi;`);
        emit(`       ${p}++;`);
        // The last axle crossing the last exit detector: the train leaves; later trains move up.
        const shift: string[] = [];
        for (let u = t; u < maxTrains - 1; u++) {
          shift.push(`${P}ax_${g}[${u}] = ${P}ax_${g}[${u + 1}]`, `${P}rt_${g}[${u}] = ${P}rt_${g}[${u + 1}]`);
          for (let a = 0; a < maxAxles; a++) shift.push(`${pos(g, u, a)} = ${pos(g, u + 1, a)}`);
        }
        shift.push(`${P}ax_${g}[${maxTrains - 1}] = 0`, `${P}rt_${g}[${maxTrains - 1}] = 0`);
        for (let a = 0; a < maxAxles; a++) shift.push(`${pos(g, maxTrains - 1, a)} = 0`);
        shift.push(`${P}n_${g}--`);
        const leaves = paths.map((path, c) => `(${rt} == ${c + 1} && ${p} == ${path.length})`).join(" || ");
        emit(`       if :: (${P}ax_${g}[${t}] == ${k + 1} && (${leaves})) -> ${shift.join("; ")} :: else -> skip fi`);
        if (k !== 0) continue;
        // §5: crossing entry fixes the route: one of the group whose points all lie as reported.
        const entryInput = ctx.detectorInput(paths[0][entry]);
        group.routes.forEach((ri, c) => {
          emit(`    /* routes ${ids}: train slot ${t + 1} crosses entry and takes route ${ctx.commentSafe(proving.routes[ri].id)} */`);
          emit(`    :: (${guard} && ${atEntry} && ${pointsSet(ri)}) -> ${rt} = ${c + 1}; ${p}++; ${P}inp = ${entryInput}`);
        });
        if (routePoints) {
          emit(`    /* routes ${ids}: train slot ${t + 1} meets points lying for none of them: misrouted, the branch ends */`);
          emit(`    :: (${guard} && ${atEntry} && !(${group.routes.map(pointsSet).join(" || ")})) ->`);
          ctx.assertOnce("points-set-for-train", "0");
          emit(`       goto ${endLabel}`);
        }
      }
    }
  });
  ctx.quietRuleIds.forEach((rule, qi) => {
    // A faulted rulebook fires no quiet triggers (they stay armed, as in the engine).
    emit(`    /* the quiet trigger of rule ${ctx.commentSafe(rule)} fires */`);
    emit(`    :: (${ctx.quietArmed(rule)} && !${P}faulted) -> ${P}inp = ${ctx.quietBase + qi}`);
  });
  ctx.points.forEach((pt, pi) => {
    const needing = proving.routes.map((r, ri) => ({ r, ri })).filter(({ r }) => r.points?.[pt.name] !== undefined);
    const moving = REPORT_CODE.moving;
    if (pt.worked === "power") {
      // Towards where last thrown: `moving`, then the thrown position (the target read when
      // the move is made, so a throw back while moving goes straight to the new target).
      const wants = `${pt.thrown} != 0 && ${pt.lie} != ${pt.thrown}`;
      const locked = needing.map(({ r, ri }) => `${under(ri)} || ${ctx.shownProceed(r.signal)}`).join(" || ") || "0";
      emit(`    /* power points ${ctx.commentSafe(pt.name)} start to move */`);
      emit(`    :: (${wants} && ${pt.lie} != ${moving}) ->`);
      if (routePoints) ctx.assertOnce("points-locked", `!(${locked})`);
      emit(`       ${P}inp = ${ctx.pointsInput(pi, moving)}`);
      emit(`    /* power points ${ctx.commentSafe(pt.name)} reach where they were thrown */`);
      emit(`    :: (${wants} && ${pt.lie} == ${moving}) -> ${P}inp = ${ctx.pointsInput(pi, REPORT_CODE.normal)} + ${pt.thrown} - 1`);
    } else {
      const free = needing.length ? `!(${needing.map(({ ri }) => under(ri)).join(" || ")})` : "1";
      emit(`    /* hand points ${ctx.commentSafe(pt.name)} moved by a person while no train is on them */`);
      emit(`    :: (${free} && ${pt.lie} != ${moving}) -> ${P}inp = ${ctx.pointsInput(pi, moving)}`);
      emit(`    :: (${free} && ${pt.lie} == ${moving}) -> ${P}inp = ${ctx.pointsInput(pi, REPORT_CODE.normal)}`);
      emit(`    :: (${free} && ${pt.lie} == ${moving}) -> ${P}inp = ${ctx.pointsInput(pi, REPORT_CODE.reverse)}`);
    }
  });
}
