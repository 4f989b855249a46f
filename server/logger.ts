import pino, { type Logger } from "pino";

/** The process logger: JSON lines on stdout; quiet in tests unless LOG_LEVEL says otherwise. */
export function createLogger(level = process.env.LOG_LEVEL ?? (process.env.VITEST ? "silent" : "info")): Logger {
  return pino({ level, base: undefined, redact: ["password", "secret", "*.password", "*.secret"] });
}
export type { Logger };
