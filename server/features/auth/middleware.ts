/**
 * Who is asking: reads the session cookie on every request, then `requirePermission(action)`
 * guards each route with the rule of shared/contract/permissions.ts. The session row and the
 * role are re-read from the database, so signing out, a changed role or a removed member
 * takes effect at once.
 */
import type { RequestHandler } from "express";
import { allowedRoles, type Action } from "@shared/contract/permissions";
import { ROLES, type Role, type UserDto } from "@shared/contract/rest";
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

export const ANY_ROLE: readonly Role[] = ROLES;

/** What guards a route, kept on the guard itself so the route × role test can read it. */
export type RouteGuard = { action: Action } | { public: string };
export type GuardedHandler = RequestHandler & { guard: RouteGuard };

/** 401 when signed out, 403 when signed in with a role the permissions table does not allow. */
export function requirePermission(action: Action): GuardedHandler {
  const allowed = allowedRoles(action);
  const handler: RequestHandler = (req, _res, next) => {
    if (!req.user) return next(new HttpError(401, "unauthenticated", "sign in first"));
    if (!allowed.includes(req.user.role)) {
      return next(new HttpError(403, "forbidden", `this needs one of the roles: ${allowed.join(", ")}`));
    }
    next();
  };
  return Object.assign(handler, { guard: { action } });
}

/** A route anyone may call; `why` says what protects it instead (a token, nothing secret). */
export function allowAnyone(why: string): GuardedHandler {
  const handler: RequestHandler = (_req, _res, next) => next();
  return Object.assign(handler, { guard: { public: why } });
}

export const requireSignedIn = requirePermission("read");
