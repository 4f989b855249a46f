/**
 * Who is asking: reads the session cookie on every request, then `requireRole` guards each
 * route. The session row and the role are re-read from the database, so signing out, a
 * changed role or a removed member takes effect at once.
 */
import type { RequestHandler } from "express";
import type { Role, UserDto } from "../../../shared/contract/rest";
import type { AppDeps } from "../../deps";
import { HttpError } from "../../http/errors";
import { SESSION_COOKIE, resolveSession, toUserDto } from "./service";

declare module "express-serve-static-core" {
  interface Request {
    user?: UserDto;
    /** The `auth_sessions` row the cookie names, while signed in. */
    sessionId?: string;
  }
}

export function loadUser(deps: AppDeps): RequestHandler {
  return async (req, _res, next) => {
    try {
      const session = await resolveSession(deps, req.cookies?.[SESSION_COOKIE]);
      if (session) {
        req.user = toUserDto(session.user);
        req.sessionId = session.sessionId;
      }
      next();
    } catch (err) {
      next(err);
    }
  };
}

export const ANY_ROLE: readonly Role[] = ["admin", "engineer", "signaller", "maintainer", "viewer"];

/** 401 when signed out, 403 when signed in with a role not in `roles`. */
export function requireRole(...roles: Role[]): RequestHandler {
  const allowed = roles.length ? roles : ANY_ROLE;
  return (req, _res, next) => {
    if (!req.user) return next(new HttpError(401, "unauthenticated", "sign in first"));
    if (!allowed.includes(req.user.role)) {
      return next(new HttpError(403, "forbidden", `this needs one of the roles: ${allowed.join(", ")}`));
    }
    next();
  };
}

export const requireSignedIn = requireRole();
