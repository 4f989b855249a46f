/**
 * The server's typed event bus: joins features without them importing each other
 * (e.g. publishing a rulebook tells the live runtime to load it).
 *
 * Every listener is guarded: one that throws, or returns a promise that rejects, is logged
 * with its owner's name and the event, and the emitter and the other listeners carry on. A
 * broken subscriber (a socket push, a mail sender) must never fault a layout or escape as an
 * unhandled rejection. Listeners are registered per owner, and `removeOwner(owner)` removes
 * all of one owner's listeners together, so anything that subscribes can be stopped.
 */
import type { AlarmSettings } from "@shared/contract/alarmSettings";
import type { AlarmDto, LivePatch, LiveUpdate } from "@shared/contract/live";

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
  /**
   * Sign-in sessions ended (sign-out, a new password, a reset, a removed member), after the
   * change is committed: live sockets opened with them are disconnected.
   */
  "auth.sessions-ended": [{ sessionId: string } | { userId: number; except?: string }];
  /** A display link was revoked: sockets holding it are disconnected. */
  "display-link.revoked": [{ layoutId: number; tokenHash: string }];
}

export type BusEvent = keyof BusEvents;
/** May return anything; a returned promise that rejects is logged like a throw. */
export type BusListener<K extends BusEvent> = (...args: BusEvents[K]) => unknown;

/** What the bus needs of a logger (pino's shape). */
export interface BusLogger {
  error(fields: object, message: string): void;
}

/** The owner of listeners registered without one. */
export const UNNAMED_OWNER = "unnamed";

interface Registration {
  owner: string;
  listener: BusListener<never>;
}

/** Used when no logger is given: the failure still shows, on stderr. */
const stderrLogger: BusLogger = {
  error: (fields, message) => process.stderr.write(`${message} ${JSON.stringify(fields, (_k, v: unknown) => (v instanceof Error ? v.stack : v))}\n`),
};

export class Bus {
  private readonly listeners = new Map<BusEvent, Registration[]>();

  constructor(private readonly logger: BusLogger = stderrLogger) {}

  /** Registers `listener` for `event` on behalf of `owner` (a feature's name, used in logs). */
  on<K extends BusEvent>(event: K, listener: BusListener<K>, owner: string = UNNAMED_OWNER): this {
    const list = this.listeners.get(event) ?? [];
    list.push({ owner, listener: listener as BusListener<never> });
    this.listeners.set(event, list);
    return this;
  }

  off<K extends BusEvent>(event: K, listener: BusListener<K>): this {
    const list = this.listeners.get(event);
    if (!list) return this;
    const index = list.findIndex((r) => r.listener === (listener as BusListener<never>));
    if (index >= 0) list.splice(index, 1);
    return this;
  }

  /** Removes every listener `owner` registered, on every event. */
  removeOwner(owner: string): void {
    for (const [event, list] of this.listeners) {
      this.listeners.set(
        event,
        list.filter((r) => r.owner !== owner),
      );
    }
  }

  listenerCount(event: BusEvent, owner?: string): number {
    return (this.listeners.get(event) ?? []).filter((r) => owner === undefined || r.owner === owner).length;
  }

  /** Calls every listener of `event` in order; true if there was any. Never throws for a listener. */
  emit<K extends BusEvent>(event: K, ...args: BusEvents[K]): boolean {
    const list = this.listeners.get(event);
    if (!list || list.length === 0) return false;
    // A listener that removes itself (or its owner) must not make the next one be skipped.
    for (const { owner, listener } of [...list]) {
      try {
        const result = (listener as BusListener<K>)(...args) as unknown;
        if (result instanceof Promise) result.catch((err: unknown) => this.failed(owner, event, err));
      } catch (err) {
        this.failed(owner, event, err);
      }
    }
    return true;
  }

  private failed(owner: string, event: BusEvent, err: unknown): void {
    try {
      this.logger.error({ err, owner, event }, `bus listener of ${owner} failed on ${event}; the others carry on`);
    } catch {
      // A failing logger must not undo the isolation.
    }
  }
}
