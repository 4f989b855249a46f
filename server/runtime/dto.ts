/**
 * Pending rows as the client sees them (shared/contract/live.ts): the pushed event and its changes.
 */
import type { ChangeDto, LiveEventDto } from "@shared/contract/live";
import type { Change } from "@shared/rulebook/engine";
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

/** The engine's change is already its wire form; a copy, so a later edit of one leaves the other. */
export function toChangeDto(change: Change): ChangeDto {
  return { ...change };
}
