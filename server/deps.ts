/**
 * Everything a feature needs, passed as one object (STYLE.md habit 4).
 */
import type { AppConfig } from "./config";
import type { Database } from "./db/database";
import type { Logger } from "./logger";
import type { Bus } from "./bus";
import type { LiveRuntime } from "./runtime/liveRuntime";
import type { Mailer } from "./features/mail/service";

export interface BrokerStatus {
  connected(): boolean;
}

export interface AppDeps {
  config: AppConfig;
  db: Database;
  logger: Logger;
  bus: Bus;
  /** The live pipeline's view of the broker, when one runs; health reports "down" otherwise. */
  broker?: BrokerStatus;
  /** The live pipeline (runners per layout), when the process runs one. */
  live?: LiveRuntime;
  /** Outgoing mail (SMTP_URL or the local fake server); without it mail is only recorded in the outbox. */
  mail?: Mailer;
  /** Milliseconds since the epoch; tests pass their own to step past expiry without sleeping. */
  clock?: () => number;
}

/** The time as the deps see it (the real clock unless a test injected one). */
export const nowMs = (deps: Pick<AppDeps, "clock">): number => (deps.clock ? deps.clock() : Date.now());
