/**
 * `GET /api/sessions/:id/report` (CONTRACT.md §6): the running day in figures. Computed by
 * replaying the session's inputs through the engine and following the trains on the
 * rulebook's proving routes; see server/features/sessions/report.ts for how trains, waits
 * and checks are judged. Times are ISO 8601 UTC strings, durations in seconds.
 */
import type { AlarmDto } from "./live";
import type { ShownAspect } from "../rulebook/schema";

/** Median and maximum of a list of durations, in seconds (null when the list is empty). */
export interface WaitFigures {
  /** Trains that met danger at the signal. */
  count: number;
  medianS: number | null;
  maxS: number | null;
}

export interface RouteReportDto {
  id: string;
  signal: string;
  /** Trains seen on the route (their first axle crossed its first approach detector). */
  trains: number;
  waits: WaitFigures;
  /** Every wait at danger, in train order (for the distribution chart). */
  waitsS: number[];
}

export interface TrainReportDto {
  /** 1, 2, … in order of arrival. */
  n: number;
  route: string;
  /** Axles counted at the route's first approach detector. */
  axles: number;
  arrivedAt: string;
  /** When its leading axle crossed the last approach detector (it then waits at its signal). */
  atSignalAt: string | null;
  enteredAt: string | null;
  clearedAt: string | null;
  /** Time at danger while waiting at its signal. */
  waitedS: number;
  /** Pulses counted at each detector of its path it has reached (0 at one it went past unseen). */
  counts: Record<string, number>;
  /** Detectors whose count differs from the axles at the first approach detector. */
  mismatches: string[];
}

/** One time a priority train met danger at its signal with the junction free. */
export interface PriorityCheckDto {
  route: string;
  signal: string;
  /** The train (`TrainReportDto.n`). */
  train: number;
  from: string;
  until: string;
  seconds: number;
  /** Index into the session's replay inputs of the input after which the check began. */
  inputIndex: number;
  /** The event of that input (links the log), when known. */
  eventId: string | null;
  /** True when a signaller held the signal at that moment; faulted when the rulebook was. */
  held: boolean;
  faulted: boolean;
  /** Counters, latches and selectors when the check began: what kept the signal at danger. */
  counters: Record<string, number>;
  latches: Record<string, boolean>;
  selectors: Record<string, string>;
}

export interface DetectorReportDto {
  id: string;
  name: string;
  /** Accepted pulses. */
  pulses: number;
  rejected: number;
  duplicate: number;
  /** Trains counted passing it. */
  trains: number;
  /** Trains whose axle count here differs from their count at the route's first approach detector. */
  mismatches: number;
  /** Pulses that no train on the routes accounts for. */
  stray: number;
}

export interface NodeReportDto {
  id: string;
  name: string;
  offlineS: number;
  /** Share of the session the board was online, 0–1. */
  uptime: number;
  offline: { from: string; until: string }[];
  /** It never reported online during the session. */
  neverConnected: boolean;
}

export interface SignalTimelineDto {
  id: string;
  name: string;
  /** The aspect shown from each time on, until the next entry or the session's end. */
  changes: { at: string; aspect: ShownAspect }[];
}

/** An alarm of the session, without who acknowledged it or how often it repeated. */
export type ReportAlarmDto = Pick<AlarmDto, "id" | "kind" | "subject" | "message" | "raisedAt" | "clearedAt" | "acknowledgedAt">;

export interface SessionReportDto {
  sessionId: number;
  layout: { slug: string; name: string };
  rulebookVersion: number | null;
  from: string;
  /** The session's end; now, for a session still open. */
  until: string;
  open: boolean;
  importedFrom: string | null;
  /** Inputs replayed to make the report. */
  inputs: number;
  priorityRoute: string | null;
  routes: RouteReportDto[];
  trains: TrainReportDto[];
  checks: PriorityCheckDto[];
  detectors: DetectorReportDto[];
  nodes: NodeReportDto[];
  signals: SignalTimelineDto[];
  alarms: ReportAlarmDto[];
}
