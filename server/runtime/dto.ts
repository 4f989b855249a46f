/**
 * Pending rows as the client sees them (shared/contract/live.ts): the pushed event and its changes.
 */
import type { ChangeDto, LiveEventDto } from "../../shared/contract/live";
import type { Change } from "../../shared/rulebook/engine";
import type { PendingEvent } from "./eventLog";

export function toEventDto(event: PendingEvent, id: string): LiveEventDto {
  return {
    id,
    kind: event.kind,
    status: event.status,
    reason: event.reason,
    node: event.node,
    boot: event.boot,
    seq: event.seq,
    detector: event.detector,
    receivedAt: new Date(event.receivedAt).toISOString(),
    boardT: event.boardT,
  };
}

export function toChangeDto(change: Change): ChangeDto {
  const dto: ChangeDto = { kind: change.kind, name: change.name, from: change.from, to: change.to };
  if (change.rule !== undefined) dto.rule = change.rule;
  if (change.command !== undefined) dto.command = change.command;
  if (change.detail !== undefined) dto.detail = change.detail;
  return dto;
}
