/**
 * The points detection checks survive a restart. A check (core/points.ts) is what raises the
 * "points-detection" alarm when power points thrown by the rules are not reported lying there
 * in time; held only in memory, a restart between the throw and the deadline would drop that
 * alarm for good, although the points may be stuck half-way. So recovery rebuilds them: every
 * points the recovered state has thrown somewhere it is not reported lying gets its check back,
 * timed from the throw as the event log has it, and marked alarmed when its alarm is still open
 * (the report that ends it then clears that alarm; no second alarm is raised).
 */
import { ALARM_KIND } from "@shared/contract/alarmKinds";
import type { AlarmDto } from "@shared/contract/live";
import type { Logger } from "../logger";
import { lastThrowTimes, type Query } from "./eventLog";
import { pendingThrows, restorePointsChecks } from "./core/points";
import type { Core } from "./core/state";

export async function recoverPointsChecks(query: Query, core: Core, openAlarms: () => Promise<AlarmDto[]>, now: number, logger: Pick<Logger, "warn">): Promise<void> {
  const pending = pendingThrows(core);
  if (pending.length === 0) return;
  // The layout must start even when the log cannot say: the checks then count from now (the alarm comes late, never not at all).
  const thrownAt = await lastThrowTimes(query, core.layoutId, pending).catch((err: unknown) => {
    logger.warn({ err, layout: core.slug }, "could not read when the points were thrown: their detection checks count from now");
    return new Map<string, number>();
  });
  // Alarms that cannot be read count as not raised: at worst the alarm is raised once more.
  const open = await openAlarms().catch(() => [] as AlarmDto[]);
  // "Open" includes cleared alarms not yet acknowledged: only one not cleared marks the check alarmed.
  const alarmed = new Set(open.filter((a) => a.kind === ALARM_KIND.pointsDetection && a.subject !== null && a.clearedAt === null).map((a) => a.subject!));
  restorePointsChecks(core, thrownAt, alarmed, now);
}
