/**
 * Everything a feature needs, passed as one object (STYLE.md habit 4). Besides the config,
 * database, logger and bus, it holds ports only: interfaces of what the live pipeline and the
 * mailer do for features, implemented elsewhere (runtime/liveRuntime.ts, features/mail/service.ts)
 * and plugged in by server/index.ts or a test. Nothing here imports a feature or the runtime.
 */
import type { CommandBody, LiveState } from "@shared/contract/live";
import type { LayoutHealth } from "@shared/contract/rest";
import type { AppConfig } from "./config";
import type { Database } from "./db/database";
import type { Logger } from "./logger";
import type { Bus } from "./bus";

export interface BrokerStatus {
  connected(): boolean;
}

/** Who gives a command or opens a session: the signed-in member. */
export interface LiveUser {
  id: number;
  name: string;
}

/** What features ask of the live pipeline (runtime/liveRuntime.ts implements it). */
export interface LivePort {
  /** Whether the layout runs live in this process (it has a runner). */
  runs(slug: string): boolean;
  /** Each running layout: live, fail-safe (signals at danger) or stalled. */
  health(): Record<string, LayoutHealth>;
  liveState(slug: string): Promise<LiveState>;
  command(slug: string, body: CommandBody, user: LiveUser): Promise<LiveState>;
  session(slug: string, action: "open" | "close", user: LiveUser): Promise<LiveState>;
}

export interface MailMessage {
  to: string;
  subject: string;
  text: string;
}

/** Outgoing mail (features/mail/service.ts starts one). */
export interface Mailer {
  send(message: MailMessage): Promise<void>;
  close(): Promise<void>;
  /** Where mail goes: the SMTP URL (password hidden) or the fake server's address. */
  describe(): string;
}

export interface AppDeps {
  config: AppConfig;
  db: Database;
  logger: Logger;
  bus: Bus;
  /** The live pipeline's view of the broker, when one runs; health reports "down" otherwise. */
  broker?: BrokerStatus;
  /** The live pipeline (runners per layout), when the process runs one. */
  live?: LivePort;
  /** Outgoing mail (SMTP_URL or the local fake server); without it mail is only recorded in the outbox. */
  mail?: Mailer;
  /** Milliseconds since the epoch; tests pass their own to step past expiry without sleeping. */
  clock?: () => number;
}

/** The time as the deps see it (the real clock unless a test injected one). */
export const nowMs = (deps: Pick<AppDeps, "clock">): number => (deps.clock ? deps.clock() : Date.now());
