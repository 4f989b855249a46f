/**
 * The server's typed event bus: joins features without them importing each other
 * (e.g. publishing a rulebook tells the live runtime to load it).
 */
import { EventEmitter } from "node:events";
import type { AlarmSettings } from "../shared/contract/alarmSettings";
import type { AlarmDto, LiveUpdate } from "../shared/contract/live";

export interface BusEvents {
  "rulebook.published": [{ layoutId: number; slug: string; version: number }];
  "layout.nodes-changed": [{ layoutId: number; slug: string }];
  /** A committed step of a layout's live pipeline, to push to its room. */
  "live.update": [LiveUpdate];
  /** An alarm was raised (`created`: newly open, not a repeat), repeated, acknowledged or cleared. */
  "alarm.changed": [AlarmDto & { slug: string; layoutId: number; created?: boolean }];
  /** A layout's alarm settings changed (the watchers and the board roll call take them at once). */
  "alarm-settings.changed": [{ layoutId: number; slug: string; settings: AlarmSettings }];
  /** A display link was revoked: sockets holding it are disconnected. */
  "display-link.revoked": [{ layoutId: number; tokenHash: string }];
}

export class Bus extends EventEmitter<BusEvents> {}
