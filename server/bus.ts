/**
 * The server's typed event bus: joins features without them importing each other
 * (e.g. publishing a rulebook tells the live runtime to load it).
 */
import { EventEmitter } from "node:events";
import type { AlarmSettings } from "../shared/contract/alarmSettings";
import type { AlarmDto, LivePatch, LiveUpdate } from "../shared/contract/live";

export interface BusEvents {
  "rulebook.published": [{ layoutId: number; slug: string; version: number }];
  "layout.nodes-changed": [{ layoutId: number; slug: string }];
  /** The records (lines, detectors, signals, points, nodes, schematic) were saved. */
  "layout.records-changed": [{ layoutId: number; slug: string; revision: number }];
  /** An admin archived a layout: it must stop running live (the live runtime listens). */
  "layout.archived": [{ layoutId: number; slug: string }];
  /** An archived layout was restored: it runs live again if it has a published rulebook. */
  "layout.restored": [{ layoutId: number; slug: string }];
  /** A published version's proof was refuted (the alarm is raised when it is the live one). */
  "rulebook.refuted": [{ layoutId: number; slug: string; version: number; live: boolean }];
  /**
   * A committed batch of a layout's live pipeline, to push to its room once; beside it each
   * step's own patch, in step order (for listeners that need a step's state, as the watchers).
   */
  "live.update": [LiveUpdate, LivePatch[]];
  /** An alarm was raised (`created`: newly open, not a repeat), repeated, acknowledged or cleared. */
  "alarm.changed": [AlarmDto & { slug: string; layoutId: number; created?: boolean }];
  /** A layout's alarm settings changed (the watchers and the board roll call take them at once). */
  "alarm-settings.changed": [{ layoutId: number; slug: string; settings: AlarmSettings }];
  /** A display link was revoked: sockets holding it are disconnected. */
  "display-link.revoked": [{ layoutId: number; tokenHash: string }];
}

export class Bus extends EventEmitter<BusEvents> {}
