/**
 * REST shapes of the sessions feature: the session list, one page of a session's event log
 * and a session's engine inputs for the replay player.
 */
import type { EngineInput, EngineState } from "../rulebook/engine";
import type { ChangeDto, EventKind, EventStatus, LiveEventDto, SessionDto } from "./live";

/** One session as the list shows it. */
export interface SessionSummaryDto extends SessionDto {
  closeReason: string | null;
  /** The uploaded file's name when the session was imported from an exported log; null for a live session. */
  importedFrom: string | null;
  eventCount: number;
  /** Who started and who ended it (null when the layout did it: the first pulse, a restart). */
  openedBy: string | null;
  closedBy: string | null;
  /** The signallers' notes on starting and ending it, one per line. */
  note: string | null;
}

/** `GET /api/layouts/:slug/sessions` */
export interface SessionListResponse {
  sessions: SessionSummaryDto[];
}

/** One event of the log with what it changed (the JSONL export's row). */
export interface SessionEventDto extends LiveEventDto {
  topic: string | null;
  user: string | null;
  input: unknown;
  changes: ChangeDto[];
}

/** Filters of the event-log table; every one optional. */
export interface SessionEventFilter {
  kind?: EventKind;
  status?: EventStatus;
  detector?: string;
  node?: string;
  /** Case-insensitive text searched for in the reason. */
  q?: string;
}

/**
 * `GET /api/sessions/:id/events?format=json&after=&limit=&kind=&status=&detector=&node=&q=`:
 * one keyset page, oldest first. Pass `next` back as `after` for the following page.
 */
export interface SessionEventPage {
  events: SessionEventDto[];
  /** Events matching the filters in the whole session. */
  total: number;
  /** The `after` of the next page; null on the last page. */
  next: string | null;
}

/**
 * `GET /api/sessions/:id/inputs`: what the live runner fed the engine during the session,
 * in the order it fed them, so a replay reproduces the recorded run exactly.
 */
export interface SessionInputsResponse {
  sessionId: number;
  /** The rulebook version that ran when the session opened. */
  rulebookVersion: number | null;
  /** The engine state just before the session's first event (state carries over between sessions). */
  start: EngineState;
  inputs: EngineInput[];
  /** The event id of each input (same order): the row of the event log it came from. */
  eventIds: string[];
  /** Versions published while the session ran: the live state restarted from their initial values. */
  rulebookSwitches: number[];
}

/** `POST /api/layouts/:slug/sessions/import` (multipart: `file`, optional `rulebookVersion`): 201. */
export interface SessionImportResponse {
  sessionId: number;
  /** Events stored. */
  events: number;
}
