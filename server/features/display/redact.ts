/**
 * What a visitor display may receive: the live state without anything about people. Alarms
 * carry who acknowledged them and their comments, and command changes carry the signaller's
 * reason (free text); a display shows neither, so neither is sent to it.
 */
import type { ChangeDto, LiveState, LiveUpdate } from "@shared/contract/live";

const redactChange = (change: ChangeDto): ChangeDto => {
  if (change.command === undefined && change.kind !== "alarm") return change;
  const { detail: _detail, ...rest } = change;
  return rest;
};

export function redactStateForDisplay(state: LiveState): LiveState {
  return { ...state, alarms: [] };
}

export function redactUpdateForDisplay(update: LiveUpdate): LiveUpdate {
  const { alarms: _alarms, ...patch } = update.patch;
  return { ...update, steps: update.steps.map((step) => ({ ...step, changes: step.changes.map(redactChange) })), patch };
}
