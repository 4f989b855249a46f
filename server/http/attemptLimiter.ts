/**
 * The one limiter of guessable attempts (sign-in, password reset, the first-start setup token,
 * invitation tokens): `LOGIN_LIMIT` per minute (deps.config), per client address unless `key`
 * says otherwise, answered 429 `too_many_attempts`. Each call makes its own budget.
 */
import type { Request, RequestHandler } from "express";
import { rateLimit } from "express-rate-limit";
import type { AppDeps } from "../deps";
import { HttpError } from "./errors";

export function attemptLimiter(deps: Pick<AppDeps, "config">, what: string, key?: (req: Request) => string): RequestHandler {
  return rateLimit({
    windowMs: deps.config.loginWindowMs,
    limit: deps.config.loginLimitPerWindow,
    standardHeaders: "draft-8",
    legacyHeaders: false,
    // Without TRUST_PROXY a client's own X-Forwarded-For is ignored on purpose (server/config.ts).
    validate: { xForwardedForHeader: false },
    ...(key ? { keyGenerator: key } : {}),
    handler: (_req, _res, next) => next(new HttpError(429, "too_many_attempts", `too many ${what}: wait a minute and try again`)),
  });
}
