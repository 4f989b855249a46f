/**
 * The server's typed event bus: joins features without them importing each other
 * (e.g. publishing a rulebook tells the live runtime to load it).
 */
import { EventEmitter } from "node:events";
import type { AlarmDto, LivePatch, LiveUpdate } from "../shared/contract/live";

export interface BusEvents {
  "rulebook.published": [{ layoutId: number; slug: string; version: number }];
  "layout.nodes-changed": [{ layoutId: number; slug: string }];
  /**
   * A committed batch of a layout's live pipeline, to push to its room once; beside it each
   * step's own patch, in step order (for listeners that need a step's state, as the watchers).
   */
  "live.update": [LiveUpdate, LivePatch[]];
  /** An alarm was raised (`created`: newly open, not a repeat), repeated, acknowledged or cleared. */
  "alarm.changed": [AlarmDto & { slug: string; layoutId: number; created?: boolean }];
  /** A display link was revoked: sockets holding it are disconnected. */
  "display-link.revoked": [{ layoutId: number; tokenHash: string }];
}

export class Bus extends EventEmitter<BusEvents> {}
