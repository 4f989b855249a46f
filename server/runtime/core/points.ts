/**
 * Power-worked points in the live core (pure): the `…/points/{id}/set` commands the shell
 * publishes after a commit, and the check that points reach where they were thrown — like lamp
 * proving, but for movement: a board that has not reported the points lying as thrown within
 * `POINTS_DETECTION_MS` raises a "points-detection" alarm, cleared when the report comes.
 * The rulebook itself decides what to do meanwhile (its `points` conditions see `moving` or the
 * old position, so a sound rulebook keeps the route's signal at danger). The checks are rebuilt
 * on recovery (`restorePointsChecks`), so a restart does not forget one.
 */
import type { Change } from "@shared/rulebook/engine";
import { ALARM_KIND } from "@shared/contract/alarmKinds";
import type { PointsPosition } from "@shared/rulebook/schema";
import { iso, type Core, type Step } from "./state";

/** How long power points may take from the throw to being reported where thrown. */
export const POINTS_DETECTION_MS = 8_000;

export interface PointsCheck {
  to: PointsPosition;
  /** When the throw was made (engine time, ms). */
  since: number;
  alarmed: boolean;
}

const detectionMs = (core: Core): number => core.options.pointsDetectionMs ?? POINTS_DETECTION_MS;

/**
 * Every power-worked points whose thrown position differs from what the boards were last told,
 * each with a new rev from the layout's one rev counter; `all` commands every thrown points again
 * (on starting to run, after a reconnect). No command goes out under a pipeline fault or outage:
 * failing safe never moves points.
 */
export function pointsCommands(core: Core, all = false): { points: string; to: PointsPosition; rev: number }[] {
  if (core.pipelineFault || core.outage) return [];
  const out: { points: string; to: PointsPosition; rev: number }[] = [];
  for (const [points, to] of Object.entries(core.state.thrown ?? {})) {
    if (!all && core.pointsSent.get(points)?.to === to) continue;
    const rev = ++core.aspectRev;
    core.pointsSent.set(points, { to, rev });
    out.push({ points, to, rev });
  }
  return out;
}

/**
 * After an engine step: a throw to where the points do not lie starts a check; a report that
 * they lie as thrown ends it (and clears its alarm, if one was raised).
 */
export function notePointsChanges(core: Core, changes: Change[], at: number, out: Step): void {
  for (const change of changes) {
    if (change.kind === "throw") {
      const to = change.to;
      if ((core.state.points?.[change.name] ?? "unknown") === to) finishCheck(core, change.name, out);
      else core.pointsChecks.set(change.name, { to, since: at, alarmed: core.pointsChecks.get(change.name)?.alarmed ?? false });
    } else if (change.kind === "points") {
      const check = core.pointsChecks.get(change.name);
      if (check && change.to === check.to) finishCheck(core, change.name, out);
    }
  }
}

function finishCheck(core: Core, points: string, out: Step): void {
  const check = core.pointsChecks.get(points);
  core.pointsChecks.delete(points);
  if (check?.alarmed) out.effects.push({ type: "clear", kind: ALARM_KIND.pointsDetection, subject: points });
}

/** The clock: checks past their time raise their alarm (once per throw). */
export function expirePointsChecks(core: Core, at: number, out: Step): void {
  const limit = detectionMs(core);
  for (const [points, check] of core.pointsChecks) {
    if (check.alarmed || at - check.since < limit) continue;
    check.alarmed = true;
    const lies = core.state.points?.[points];
    const message = `points ${points} were thrown ${check.to} at ${iso(check.since)} but are reported ${lies ?? "nowhere yet"} after ${Math.round(limit / 1000)} s: check the points and their detection before using the route`;
    out.effects.push({ type: "alarm", kind: ALARM_KIND.pointsDetection, subject: points, message, event: null });
  }
}

/** When the next check runs out, or null. */
export function nextPointsDue(core: Core): number | null {
  let due: number | null = null;
  const limit = detectionMs(core);
  for (const check of core.pointsChecks.values()) if (!check.alarmed) due = due === null ? check.since + limit : Math.min(due, check.since + limit);
  return due;
}

/** Points the state has thrown somewhere they are not reported lying (each needs a check). */
export function pendingThrows(core: Core): string[] {
  return Object.entries(core.state.thrown ?? {})
    .filter(([points, to]) => (core.state.points?.[points] ?? "unknown") !== to)
    .map(([points]) => points);
}

/**
 * Recovery (server/runtime/pointsRecovery.ts): a check for every pending throw, from when it was
 * thrown (`now` when the log does not say), alarmed when its alarm is still open.
 */
export function restorePointsChecks(core: Core, thrownAt: ReadonlyMap<string, number>, alarmed: ReadonlySet<string>, now: number): void {
  for (const points of pendingThrows(core)) {
    const to = core.state.thrown![points] as PointsPosition;
    core.pointsChecks.set(points, { to, since: thrownAt.get(points) ?? now, alarmed: alarmed.has(points) });
  }
}
