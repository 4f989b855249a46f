/**
 * Alarms raised and cleared by committed steps, stored one after another through the
 * injected AlarmPort, off the runner's path: a slow or failing alarm store never holds up a
 * commit, and a failure is logged, not thrown.
 */
import type { Effect } from "./core/state";
import type { RuntimeDeps } from "./ports";

export type AlarmEffect = { effect: Extract<Effect, { type: "alarm" | "clear" }>; eventId: string | null };

export class AlarmOutbox {
  private chain: Promise<void> = Promise.resolve();

  constructor(
    private readonly deps: RuntimeDeps,
    private readonly layoutId: number,
    private readonly slug: string,
  ) {}

  send(alarms: AlarmEffect[], sessionId: number | null): void {
    this.chain = this.chain.then(async () => {
      for (const { effect, eventId } of alarms) {
        try {
          if (effect.type === "alarm") {
            await this.deps.alarms.raise({ layoutId: this.layoutId, kind: effect.kind, subject: effect.subject, message: effect.message, eventId, sessionId });
          } else await this.deps.alarms.clear(this.layoutId, effect.kind, effect.subject);
        } catch (err) {
          this.deps.logger.error({ err, layout: this.slug }, "could not store an alarm");
        }
      }
    });
  }

  /** Resolves when everything sent so far is stored (or has failed). */
  flushed(): Promise<void> {
    return this.chain;
  }
}
