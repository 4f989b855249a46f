import pino, { type Logger } from "pino";
import pretty from "pino-pretty";

/**
 * The process logger. JSON lines for programs (log collectors, tests); readable, aligned lines
 * when a person watches a terminal: this process's own stdout is one, or the launcher, whose
 * children write to pipes, says its stdout is (`BLOCKLIGHT_PRETTY=1`). Quiet in tests unless
 * LOG_LEVEL says otherwise.
 */
export function createLogger(level = process.env.LOG_LEVEL ?? (process.env.VITEST ? "silent" : "info")): Logger {
  const options = { level, base: undefined, redact: ["password", "secret", "*.password", "*.secret"] };
  const forPerson = process.env.BLOCKLIGHT_PRETTY === "1" || (process.stdout.isTTY && !process.env.VITEST);
  if (!forPerson) return pino(options);
  // Synchronous, in this thread: a log line written just before a crash is not lost in a worker.
  const stream = pretty({ sync: true, colorize: true, translateTime: "SYS:HH:MM:ss.l", ignore: "pid,hostname", singleLine: true });
  return pino(options, stream);
}
export type { Logger };
