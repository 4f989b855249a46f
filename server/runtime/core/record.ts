/**
 * Building blocks of the core's steps: new event rows, the session clock, and one engine
 * input run with its changes, alarms and fail-safe (pure; see state.ts).
 */
import { ALARM_KIND, type AlarmKind } from "@shared/contract/alarmKinds";
import type { LiveUpdate } from "@shared/contract/live";
import { ENGINE_ALARM, type EngineAlarmCode } from "@shared/rulebook/engineAlarms";
import { step as engineStep, type Change, type EngineInput } from "@shared/rulebook/engine";
import type { PendingEvent } from "../eventLog";
import { notePointsChanges } from "./points";
import { iso, patchFor, sessionDto, type Core, type Step } from "./state";

export function newEvent(core: Core, partial: Partial<PendingEvent> & Pick<PendingEvent, "kind" | "status" | "receivedAt">): PendingEvent {
  return {
    reason: null,
    node: null,
    boot: null,
    seq: null,
    detector: null,
    boardT: null,
    topic: null,
    rawPayload: null,
    userId: null,
    input: null,
    session: core.session?.ref ?? null,
    changes: [],
    ...partial,
  };
}

/** Adds an event row and its pushed update; returns its index in the step's rows. */
export function record(out: Step, event: PendingEvent, patch: LiveUpdate["patch"] = {}): number {
  out.rows.events.push(event);
  const index = out.rows.events.length - 1;
  out.effects.push({ type: "update", event: index, patch });
  return index;
}

export function closeIfIdle(core: Core, at: number, out: Step): void {
  if (!core.session || at - core.session.lastActivity < core.options.sessionIdleMs) return;
  out.rows.sessionCloses.push({ session: core.session.ref, closedAt: core.session.lastActivity + core.options.sessionIdleMs, reason: "idle" });
  core.session = null;
  out.effects.push({ type: "update", event: null, patch: { session: null } });
}

/** A pulse or command happened at `at`: the open session goes on, or a new one opens. */
export function ensureSession(core: Core, at: number, openedBy: number | null, out: Step): void {
  closeIfIdle(core, at, out);
  if (core.session) {
    core.session.lastActivity = Math.max(core.session.lastActivity, at);
    return;
  }
  const temp = ++core.tempKeys;
  out.rows.sessionOpens.push({ temp, openedAt: at, rulebookVersion: core.rulebookVersion, openedBy });
  core.session = { ref: { temp }, openedAt: at, rulebookVersion: core.rulebookVersion, lastActivity: at };
  out.effects.push({ type: "update", event: null, patch: { session: sessionDto(core) } });
}

/** The alarm each engine alarm code is listed as: a rule's own alarm action is a rulebook alarm. */
const ALARM_OF_ENGINE_CODE: Record<EngineAlarmCode, AlarmKind> = {
  [ENGINE_ALARM.countUnderflow]: ALARM_KIND.countUnderflow,
  [ENGINE_ALARM.ruleLoop]: ALARM_KIND.ruleLoop,
  [ENGINE_ALARM.ruleAlarm]: ALARM_KIND.rulebook,
};

function alarmOfChange(change: Change): { kind: AlarmKind; subject: string; message: string } | null {
  if (change.kind !== "alarm") return null;
  const message = change.detail ?? String(change.to);
  return { kind: ALARM_OF_ENGINE_CODE[change.to], subject: change.name, message };
}

/**
 * Runs one engine input and records its event. If the engine throws, the event is stored as
 * rejected, the layout is faulted (every signal to danger at once) and -1 is returned.
 */
export function runEngine(core: Core, input: EngineInput, event: PendingEvent, out: Step): number {
  let changes: Change[];
  try {
    const result = engineStep(core.rulebook, core.state, input);
    core.state = result.state;
    changes = result.changes;
  } catch (err) {
    const reason = `the rulebook engine failed: ${(err as Error).message}`;
    event.status = "rejected";
    event.reason = reason;
    const index = record(out, event);
    core.pipelineFault ??= { reason, at: input.at };
    out.effects.push({ type: "fail-safe" });
    out.effects.push({ type: "alarm", kind: ALARM_KIND.rulebook, subject: "pipeline", message: `${reason}; every signal at danger until a restart`, event: index });
    return -1;
  }
  event.changes = changes;
  core.inputsSinceSnapshot++;
  const index = record(out, event, patchFor(core, changes, iso(input.at)));
  notePointsChanges(core, changes, input.at, out);
  for (const change of changes) {
    const alarm = alarmOfChange(change);
    if (alarm) out.effects.push({ type: "alarm", ...alarm, event: index });
  }
  return index;
}
