/**
 * The server's typed event bus: joins features without them importing each other
 * (e.g. publishing a rulebook tells the live runtime to load it).
 */
import { EventEmitter } from "node:events";

export interface BusEvents {
  "rulebook.published": [{ layoutId: number; slug: string; version: number }];
  "layout.nodes-changed": [{ layoutId: number; slug: string }];
}

export class Bus extends EventEmitter<BusEvents> {}
