/**
 * What the live pipeline needs from the rest of the server, passed in (it imports nothing
 * from features/ or http/): alarms go out through `AlarmPort`, committed steps through the
 * bus, and input errors come back as `LiveError`, which the REST layer turns into its reply.
 */
import type { AlarmDto, AlarmKind } from "@shared/contract/live";
import type { Bus } from "../bus";
import type { Logger } from "../logger";

export interface RaiseAlarm {
  layoutId: number;
  kind: AlarmKind;
  subject: string | null;
  message: string;
  eventId: string | null;
  sessionId: number | null;
}

/** Alarms as the live pipeline raises, clears and reads them (implemented by features/alarms). */
export interface AlarmPort {
  raise(alarm: RaiseAlarm): Promise<void>;
  clear(layoutId: number, kind: AlarmKind, subject: string | null): Promise<void>;
  listOpen(layoutId: number): Promise<AlarmDto[]>;
}

export interface RuntimeDeps {
  logger: Logger;
  bus: Bus;
  alarms: AlarmPort;
}

/** A request the live pipeline refuses (unknown layout, a command naming nothing): status and code for the reply. */
export class LiveError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: { path: string; message: string }[],
  ) {
    super(message);
  }
}
